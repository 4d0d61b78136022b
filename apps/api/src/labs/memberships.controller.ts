import { Body, Controller, Delete, Get, HttpCode, Param, Put } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { LabIdParamDto } from './labs.schemas';
import { MemberParamDto, MembershipDto, MembershipListDto, SetMembershipDto } from './memberships.schemas';
import { MembershipsService } from './memberships.service';

@ApiTags('labs')
@PeopleOnly()
@Controller('v1/labs/:labId/members')
export class MembershipsController {
  constructor(private readonly memberships: MembershipsService) {}

  @Get()
  @ApiOperation({ summary: 'The lab’s members and their roles (administrators, auditors, the lab’s managers)' })
  @ZodResponse({ status: 200, type: MembershipListDto })
  list(@Ctx() ctx: RequestContext, @Param() params: LabIdParamDto) {
    return this.memberships.list(ctx, params.labId);
  }

  @Put(':personId')
  @ApiOperation({
    summary: 'Give a person a role in the lab, or change it (administrators, the lab’s managers)',
    description: 'Idempotent. 409 when another member of the lab has the same externalRef.',
  })
  @ZodResponse({ status: 200, type: MembershipDto })
  set(@Ctx() ctx: RequestContext, @Param() params: MemberParamDto, @Body() body: SetMembershipDto) {
    return this.memberships.set(ctx, params.labId, params.personId, body);
  }

  @Delete(':personId')
  @HttpCode(204)
  @ApiOperation({
    summary: 'Take a person out of the lab (administrators, the lab’s managers)',
    description: 'Removes the access grant only: everything the person recorded stays, and the audit trail keeps the membership.',
  })
  remove(@Ctx() ctx: RequestContext, @Param() params: MemberParamDto) {
    return this.memberships.remove(ctx, params.labId, params.personId);
  }
}
