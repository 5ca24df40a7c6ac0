import { Global, Module, type DynamicModule } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { CLOCK, IDS, systemClock, uuidV7Ids, type Clock, type IdGenerator } from './clock.provider';

export interface CoreOverrides {
  clock?: Clock;
  ids?: IdGenerator;
}

/** Configuration, clock and id generation, available to every module. */
@Global()
@Module({})
export class CoreModule {
  static forRoot(config: AppConfig, overrides: CoreOverrides = {}): DynamicModule {
    return {
      module: CoreModule,
      providers: [
        { provide: APP_CONFIG, useValue: config },
        { provide: CLOCK, useValue: overrides.clock ?? systemClock },
        { provide: IDS, useValue: overrides.ids ?? uuidV7Ids },
      ],
      exports: [APP_CONFIG, CLOCK, IDS],
    };
  }
}
