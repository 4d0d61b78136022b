import { Controller, Get } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';

import type { RequestContext } from './actor';
import { Ctx, OpenDuringPasswordChange, PeopleOnly } from './auth.decorators';

@ApiTags('sessions')
@Controller('v1/me')
export class MeController {
  @Get()
  @PeopleOnly()
  @OpenDuringPasswordChange()
  @ApiOperation({ summary: 'Who is signed in: registry role and lab memberships' })
  me(@Ctx() ctx: RequestContext) {
    const a = ctx.actor;
    if (a.kind !== 'person') throw new Error('unreachable: people-only route');
    return {
      id: a.id,
      email: a.email,
      displayName: a.displayName,
      registryRole: a.registryRole,
      mustChangePassword: a.mustChangePassword,
      labs: [...a.labs].map(([labId, role]) => ({ labId, role })),
    };
  }
}
