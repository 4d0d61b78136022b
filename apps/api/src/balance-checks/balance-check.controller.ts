import { Body, Controller, Get, HttpCode, Param, Post, Query } from '@nestjs/common';
import { ApiBody, type ApiBodyOptions, ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { CredentialScopes, Ctx, PeopleOnly } from '../auth/auth.decorators';
import { CAUTION_LINE } from '../calculations/calculations.docs';
import { CHECK_EXAMPLES } from './balance-check.examples';
import { BalanceCheckDto, BalanceCheckPageDto } from './balance-check.responses';
import { RegistryValidationPipe } from '../common/validation';
import {
  BalanceParamDto,
  CheckListQueryDto,
  CheckParamDto,
  type RecordCheck,
  RecordCheckDto,
  RecordCheckSchema,
} from './balance-check.schemas';
import { BalanceCheckService } from './balance-check.service';

const RECORD_DOC =
  'For the lab’s analysts and managers, and administrators. `quick`: readings of one weight against the lab’s limit; ' +
  '`usp41`: at least 10 replicate readings (repeatability with the 0.41 d floor; the minimum weight 2000 · s is stored on the ' +
  'balance when the check passes) and an accuracy reading of a weight between 5 % and 100 % of the capacity, optionally ' +
  'corner loads; `eccentricity`: centre and off-centre readings against the lab’s limit. The reading is compared with the ' +
  'conventional mass on the weight’s certificate (its nominal mass when none is recorded).\n\n' +
  'A failing check quarantines a balance in service, and the response lists the impact: the calibrations made with the ' +
  'balance since its last passing check and the current factors made from them, now marked for review. A passing check ' +
  'returns the balance to service only when a failed check had quarantined it and the passing check tests what failed ' +
  '(a quick check does not answer a failed USP <41> check); a balance a person quarantined stays so.\n\n' +
  `${CAUTION_LINE}`;

@ApiTags('balance checks')
@Controller('v1/balances/:balanceId/checks')
export class BalanceCheckController {
  constructor(private readonly checks: BalanceCheckService) {}

  @Post()
  @PeopleOnly()
  @HttpCode(201)
  @ApiOperation({ summary: 'Record a routine check of a balance (quick, USP <41>, eccentricity)', description: RECORD_DOC })
  @ApiBody({ type: RecordCheckDto, required: true, examples: CHECK_EXAMPLES } as ApiBodyOptions)
  @ApiResponse({ status: 400, description: 'validation-failed: a member is missing, unknown or malformed; fewer than 10 replicates' })
  @ApiResponse({
    status: 403,
    description: 'forbidden: auditors, service credentials and people outside the lab’s staff do not record checks',
  })
  @ApiResponse({ status: 404, description: 'not-found: no such balance, or not in a lab you can read' })
  @ApiResponse({ status: 409, description: 'invalid-state: the balance is retired; conflict: a later check is already recorded' })
  @ApiResponse({
    status: 422,
    description:
      'traceability-violation: the weight is not the lab’s, not in service, its certificate is missing or overdue, or it does ' +
      'not suit the test (`violations[].rule`); unprocessable-quantity: a reading the method cannot use',
  })
  @ZodResponse({ status: 201, type: BalanceCheckDto })
  record(
    @Ctx() ctx: RequestContext,
    @Param() params: BalanceParamDto,
    @Body(new RegistryValidationPipe(RecordCheckSchema)) body: RecordCheck,
  ) {
    return this.checks.record(ctx, params.balanceId, body);
  }

  @Get()
  @CredentialScopes('inventory:read')
  @ApiOperation({ summary: 'Checks of a balance, newest first, cursor pages (readers of the balance’s lab)' })
  @ApiResponse({ status: 404, description: 'not-found: no such balance, or not in a lab you can read' })
  @ZodResponse({ status: 200, type: BalanceCheckPageDto })
  list(@Ctx() ctx: RequestContext, @Param() params: BalanceParamDto, @Query() query: CheckListQueryDto) {
    return this.checks.list(ctx, params.balanceId, query);
  }

  @Get(':checkId')
  @CredentialScopes('inventory:read')
  @ApiOperation({ summary: 'One check of a balance, as recorded (with its impact when it failed)' })
  @ApiResponse({ status: 404, description: 'not-found: no such balance or check, or not in a lab you can read' })
  @ZodResponse({ status: 200, type: BalanceCheckDto })
  get(@Ctx() ctx: RequestContext, @Param() params: CheckParamDto) {
    return this.checks.get(ctx, params.balanceId, params.checkId);
  }
}
