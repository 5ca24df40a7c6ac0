// Identity's core, global so every module can check scopes, revoke sessions and sign tokens:
// the real SESSION_CHECK used by the global guard, token issue and rotation, the DB-backed
// attempt limiter, injectable crypto and the ScopeService.
import { MikroOrmModule } from '@mikro-orm/nestjs';
import { Global, Module } from '@nestjs/common';
import { AttemptLimiter } from './attempt-limiter.service';
import { AuthSession } from './auth-session.entity';
import { AuthController } from './auth.controller';
import { AuthService } from './auth.service';
import { DbSessionCheck } from './db-session-check';
import { RefreshToken } from './refresh-token.entity';
import { ScopeService } from './scope';
import { SECRETS, nodeSecrets } from './secrets.provider';
import { SESSION_CHECK } from './session-check';
import { TokenService } from './token.service';

@Global()
@Module({
  imports: [MikroOrmModule.forFeature([AuthSession, RefreshToken])],
  controllers: [AuthController],
  providers: [
    { provide: SECRETS, useValue: nodeSecrets },
    { provide: SESSION_CHECK, useClass: DbSessionCheck },
    AttemptLimiter,
    AuthService,
    TokenService,
    ScopeService,
  ],
  exports: [SESSION_CHECK, SECRETS, AttemptLimiter, AuthService, TokenService, ScopeService],
})
export class AuthModule {}
