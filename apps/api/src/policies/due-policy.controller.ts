import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag, WithLocation } from '../common/http/etag.interceptor';
import {
  ChangeListQueryDto,
  ChangePageDto,
  CreatePolicyDto,
  PolicyDto,
  PolicyListQueryDto,
  PolicyPageDto,
  PolicyParamDto,
  UpdatePolicyDto,
} from './due-policy.schemas';
import { DuePolicyService } from './due-policy.service';

const POLICY_DOC =
  'A lab’s recalibration policy for one kind of subject (vessels also per vessel kind and accuracy class; the most specific ' +
  'applies): an interval and a due-soon lead time, for vessels optionally adaptive. Without a policy the registry uses 365 days ' +
  'and a 30-day lead time (0 for routine checks). A due date on a balance’s, weight’s or instrument’s certificate wins over the ' +
  'interval, which applies from the calibration date when no due date is recorded. Routine balance checks and personal factors ' +
  'keep their intervals in the lab’s settings (balanceCheckWindowDays, factorValidityDays); their policies set the lead time. ' +
  'Managers set their own lab’s policies, administrators any lab’s.\n\n' +
  'The registry supports, and does not replace, the lab’s quality system and its own rules for intervals.';

@ApiTags('due dates')
@Controller('v1')
export class DuePolicyController {
  constructor(private readonly policies: DuePolicyService) {}

  @Post('due-policies')
  @PeopleOnly()
  @WithEtag()
  @WithLocation()
  @ApiOperation({ summary: 'Set a recalibration policy (lab managers, administrators)', description: POLICY_DOC })
  @ApiResponse({ status: 400, description: 'validation-failed: a member is missing, out of range, or does not fit the kind' })
  @ApiResponse({ status: 409, description: 'conflict: the lab already has a policy for this scope' })
  @ZodResponse({ status: 201, type: PolicyDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreatePolicyDto) {
    return this.policies.create(ctx, body);
  }

  @Get('due-policies')
  @PeopleOnly()
  @ApiOperation({ summary: 'Recalibration policies of the labs you read' })
  @ZodResponse({ status: 200, type: PolicyPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: PolicyListQueryDto) {
    return this.policies.list(ctx, query);
  }

  @Get('due-policies/:policyId')
  @PeopleOnly()
  @WithEtag()
  @ApiOperation({ summary: 'One recalibration policy' })
  @ZodResponse({ status: 200, type: PolicyDto })
  get(@Ctx() ctx: RequestContext, @Param() params: PolicyParamDto) {
    return this.policies.get(ctx, params.policyId);
  }

  @Patch('due-policies/:policyId')
  @PeopleOnly()
  @NeedsIfMatch()
  @ApiOperation({ summary: 'Change a policy’s interval, lead time or adaptive rule, with a reason (lab managers, administrators)' })
  @ZodResponse({ status: 200, type: PolicyDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: PolicyParamDto,
    @Body() body: UpdatePolicyDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.policies.update(ctx, params.policyId, body, ifMatch);
  }

  @Get('interval-changes')
  @PeopleOnly()
  @ApiOperation({
    summary: 'Every change of an interval, newest first',
    description:
      'Policies set by people (method `policy`) and adaptive steps of single vessels (method `staircase`), each with its reason and approver.',
  })
  @ZodResponse({ status: 200, type: ChangePageDto })
  changes(@Ctx() ctx: RequestContext, @Query() query: ChangeListQueryDto) {
    return this.policies.changes(ctx, query);
  }
}
