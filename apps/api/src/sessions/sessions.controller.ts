import { Body, Controller, Delete, HttpCode, Post } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, OpenDuringPasswordChange, PeopleOnly, Public } from '../auth/auth.decorators';
import { type Caller, CallerInfo } from './caller.decorator';
import { ChangePasswordDto, SignedInDto, SignInDto } from './sessions.schemas';
import { SessionsService } from './sessions.service';
import { PasswordChangeService } from './password-change.service';

@ApiTags('sessions')
@Controller('v1')
export class SessionsController {
  constructor(
    private readonly sessions: SessionsService,
    private readonly passwords: PasswordChangeService,
  ) {}

  @Post('sessions')
  @Public()
  @ApiOperation({
    summary: 'Sign in with email and password; returns a bearer token',
    description:
      'Every refusal (unknown email, wrong password, disabled account) is the same 401. Repeated failures for one email ' +
      'or one client address are answered with 429 and Retry-After until the oldest counted failure is out of the window.',
  })
  @ZodResponse({ status: 201, type: SignedInDto })
  @ApiResponse({ status: 401, description: 'unauthenticated: the email or password is not right' })
  @ApiResponse({ status: 429, description: 'too-many-requests: wait the Retry-After seconds' })
  signIn(@Body() body: SignInDto, @CallerInfo() caller: Caller) {
    return this.sessions.signIn(body, caller);
  }

  @Delete('sessions/current')
  @OpenDuringPasswordChange()
  @PeopleOnly()
  @HttpCode(204)
  @ApiOperation({ summary: 'Sign out: the token stops working at once' })
  signOut(@Ctx() ctx: RequestContext) {
    return this.sessions.signOut(ctx);
  }

  @Post('me/password')
  @OpenDuringPasswordChange()
  @PeopleOnly()
  @HttpCode(204)
  @ApiOperation({
    summary: 'Change your password; your other sessions end',
    description: '12 to 128 characters, not a common password, not containing your email name. Clears mustChangePassword.',
  })
  @ApiResponse({ status: 400, description: 'validation-failed: the current password is wrong or the new one is refused (see errors)' })
  changePassword(@Ctx() ctx: RequestContext, @Body() body: ChangePasswordDto) {
    return this.passwords.change(ctx, body);
  }
}
