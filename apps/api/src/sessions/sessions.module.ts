import { Module } from '@nestjs/common';

import { PasswordChangeService } from './password-change.service';
import { SessionsController } from './sessions.controller';
import { SessionsService } from './sessions.service';
import { SignInRepository } from './sign-in.repository';
import { SignInThrottle } from './sign-in-throttle';

/** Sign-in, sign-out and password changes. */
@Module({
  controllers: [SessionsController],
  providers: [SessionsService, PasswordChangeService, SignInRepository, SignInThrottle],
  exports: [SignInRepository],
})
export class SessionsModule {}
