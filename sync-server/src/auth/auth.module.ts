import { Global, Module } from '@nestjs/common';
import { SESSION_CHECK, type SessionCheck } from './session-check';

// Foundation seam: until sessions and tablets are stored, a validly signed token is active.
// The identity work replaces this with checks of the session family, person and tablet.
const signatureOnlyCheck: SessionCheck = { assertActive: async () => undefined };

@Global()
@Module({
  providers: [{ provide: SESSION_CHECK, useValue: signatureOnlyCheck }],
  exports: [SESSION_CHECK],
})
export class AuthModule {}
