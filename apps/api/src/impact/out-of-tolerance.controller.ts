import { Body, Controller, HttpCode, Param, Post } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { InstrumentParamDto, OutOfToleranceRequestDto, OutOfToleranceResponseDto } from './out-of-tolerance.schemas';
import { OutOfToleranceService } from './out-of-tolerance.service';

@ApiTags('environment instruments')
@Controller('v1/instruments/:instrumentId/out-of-tolerance')
export class OutOfToleranceController {
  constructor(private readonly findings: OutOfToleranceService) {}

  @Post()
  @PeopleOnly()
  @HttpCode(200)
  @ApiOperation({
    summary:
      'Report an instrument found out of tolerance: quarantine it and mark the impact for review (the lab’s managers, administrators)',
    description:
      'Quarantines the instrument if it is in service, and lists the calibrations that used it as thermometer since its last ' +
      'calibration date with the current factors made from them, which are marked for review. All in one transaction, audited.',
  })
  @ApiResponse({ status: 400, description: 'validation-failed: foundAt and reason are required; foundAt not in the future' })
  @ApiResponse({ status: 403, description: 'forbidden: only the lab’s managers or an administrator' })
  @ApiResponse({ status: 404, description: 'not-found: no such instrument, or not in a lab you can read' })
  @ZodResponse({ status: 200, type: OutOfToleranceResponseDto })
  report(@Ctx() ctx: RequestContext, @Param() params: InstrumentParamDto, @Body() body: OutOfToleranceRequestDto) {
    return this.findings.report(ctx, params.instrumentId, body);
  }
}
