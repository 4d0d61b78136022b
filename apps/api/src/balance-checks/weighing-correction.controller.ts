import { Body, Controller, HttpCode, Param, Post } from '@nestjs/common';
import { ApiBody, type ApiBodyOptions, ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { CredentialScopes, Ctx } from '../auth/auth.decorators';
import { CORRECTION_EXAMPLES } from './balance-check.examples';
import { BalanceParamDto } from './balance-check.schemas';
import { WeighingCorrectionRequestDto, WeighingCorrectionResponseDto } from './weighing-correction.schemas';
import { WeighingCorrectionService } from './weighing-correction.service';

@ApiTags('balance checks')
@Controller('v1/balances/:balanceId/weighing-corrections')
export class WeighingCorrectionController {
  constructor(private readonly corrections: WeighingCorrectionService) {}

  @Post()
  @HttpCode(200)
  @CredentialScopes('corrections:write')
  @ApiOperation({
    summary: 'Correct a reading on this balance for air buoyancy: true mass and conventional mass',
    description:
      'Uses the balance’s adjustment-weight density. For people who can read the balance’s lab and service credentials with ' +
      '`corrections:write` for it. Nothing is stored.\n\n' +
      'Refused (422 traceability-violation, rule `balance-in-service` or `balance-calibration-current`) when the balance is ' +
      'quarantined or retired, or its external calibration is overdue or not on record: such a reading must not be ' +
      'corrected as if it were traceable. Warned (`warnings`): a reading below the balance’s minimum weight, no minimum ' +
      'weight determined yet, no passing routine check within the lab’s window.',
  })
  @ApiBody({ type: WeighingCorrectionRequestDto, required: true, examples: CORRECTION_EXAMPLES } as ApiBodyOptions)
  @ApiResponse({ status: 400, description: 'validation-failed: give exactly one of airDensityKgPerM3 and airConditions' })
  @ApiResponse({ status: 404, description: 'not-found: no such balance, or not in a lab you can read' })
  @ApiResponse({
    status: 422,
    description: 'traceability-violation: the balance may not be used; unprocessable-quantity: a value outside what the method allows',
  })
  @ZodResponse({ status: 200, type: WeighingCorrectionResponseDto })
  correct(@Ctx() ctx: RequestContext, @Param() params: BalanceParamDto, @Body() body: WeighingCorrectionRequestDto) {
    return this.corrections.correct(ctx, params.balanceId, body);
  }
}
