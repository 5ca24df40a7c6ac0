import { Global, Module, type DynamicModule } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { PUSH_OBSERVER, noPushObserver, type PushObserver } from '../sync/push-observer';
import { CLOCK, IDS, systemClock, uuidV7Ids, type Clock, type IdGenerator } from './clock.provider';

export interface CoreOverrides {
  clock?: Clock;
  ids?: IdGenerator;
  /** Receives each push's step timings (the push benchmark); by default nothing does. */
  pushObserver?: PushObserver;
}

/** Configuration, clock, id generation and the push observer, available to every module. */
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
        { provide: PUSH_OBSERVER, useValue: overrides.pushObserver ?? noPushObserver },
      ],
      exports: [APP_CONFIG, CLOCK, IDS, PUSH_OBSERVER],
    };
  }
}
