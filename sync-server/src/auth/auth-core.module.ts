import { Global, Module, type DynamicModule } from '@nestjs/common';
import { JwtModule } from '@nestjs/jwt';
import type { AppConfig } from '../config/app-config';

/** Token signing for the whole app (the auth module issues tokens, the global guard checks them). */
@Global()
@Module({})
export class AuthCoreModule {
  static forRoot(config: AppConfig): DynamicModule {
    return {
      module: AuthCoreModule,
      imports: [
        JwtModule.register({
          global: true,
          secret: config.jwtSecret,
          signOptions: { expiresIn: config.accessTokenTtlSeconds, algorithm: 'HS256' },
          verifyOptions: { algorithms: ['HS256'] },
        }),
      ],
      exports: [JwtModule],
    };
  }
}
