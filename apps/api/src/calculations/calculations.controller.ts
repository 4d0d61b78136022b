import { Body, Controller, Post } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import { CredentialScopes } from '../auth/auth.decorators';
import { BalanceCheckRequestDto, BalanceCheckResponseDto } from './balance.schemas';
import { BalanceCheckService } from './balance-check.service';
import { ApiExampleBody, CAUTION_LINE, UNPROCESSABLE } from './calculations.docs';
import { EXAMPLES } from './calculations.examples';
import {
  AirDensityResponseDto,
  BuoyancyResponseDto,
  ConventionalMassResponseDto,
  WaterDensityResponseDto,
  ZFactorResponseDto,
} from './calculations.responses';
import {
  AirDensityRequestDto,
  BuoyancyRequestDto,
  ConventionalMassRequestDto,
  WaterDensityRequestDto,
  ZFactorRequestDto,
} from './calculations.schemas';
import { CalculationsService } from './calculations.service';
import { GravimetricVolumeResponseDto } from './gravimetric.responses';
import { GravimetricVolumeRequestDto } from './gravimetric.schemas';
import { GravimetricService } from './gravimetric.service';

/** Stateless published-method calculations: nothing is stored, the same body always gives the same answer. */
@ApiTags('calculations')
// Signed-in people, and service credentials holding calculations:run (the other systems' main use).
@CredentialScopes('calculations:run')
@Controller('v1/calculations')
export class CalculationsController {
  constructor(
    private readonly calculations: CalculationsService,
    private readonly gravimetric: GravimetricService,
    private readonly balance: BalanceCheckService,
  ) {}

  @Post('water-density')
  @ApiOperation({ summary: 'Density of water (Tanaka et al. 2001), 0 to 40 °C', description: UNPROCESSABLE })
  @ApiExampleBody(WaterDensityRequestDto, EXAMPLES.waterDensity)
  @ZodResponse({ status: 200, type: WaterDensityResponseDto })
  waterDensity(@Body() body: WaterDensityRequestDto) {
    return this.calculations.waterDensity(body);
  }

  @Post('air-density')
  @ApiOperation({ summary: 'Density of moist air (CIPM-2007, or the OIML R 111-1 simplified formula)', description: UNPROCESSABLE })
  @ApiExampleBody(AirDensityRequestDto, EXAMPLES.airDensity)
  @ZodResponse({ status: 200, type: AirDensityResponseDto })
  airDensity(@Body() body: AirDensityRequestDto) {
    return this.calculations.airDensity(body);
  }

  @Post('z-factor')
  @ApiOperation({ summary: 'Z factor (mL/g) converting a mass of water weighed in air to a volume', description: UNPROCESSABLE })
  @ApiExampleBody(ZFactorRequestDto, EXAMPLES.zFactor)
  @ZodResponse({ status: 200, type: ZFactorResponseDto })
  zFactor(@Body() body: ZFactorRequestDto) {
    return this.calculations.zFactor(body);
  }

  @Post('gravimetric-volume')
  @ApiOperation({
    summary: 'One gravimetric calibration point: replicate volumes, statistics, uncertainty budget, outliers and verdict',
    description:
      'ISO 4787 (ISO 8655-6 for piston pipettes) model with the EURAMET cg-19 budget. Replicates are never dropped: ' +
      "Grubbs' test only reports. The verdict uses the laboratory's limit when given, else the published class limit " +
      `(vesselKind + accuracyClass), else it is no-limit.\n\n${UNPROCESSABLE}\n\n${CAUTION_LINE}`,
  })
  @ApiExampleBody(GravimetricVolumeRequestDto, EXAMPLES.gravimetricVolume)
  @ZodResponse({ status: 200, type: GravimetricVolumeResponseDto })
  gravimetricVolume(@Body() body: GravimetricVolumeRequestDto) {
    return this.gravimetric.evaluate(body);
  }

  @Post('buoyancy')
  @ApiOperation({ summary: 'True mass from a balance reading (air buoyancy correction)', description: UNPROCESSABLE })
  @ApiExampleBody(BuoyancyRequestDto, EXAMPLES.buoyancy)
  @ZodResponse({ status: 200, type: BuoyancyResponseDto })
  buoyancy(@Body() body: BuoyancyRequestDto) {
    return this.calculations.buoyancy(body);
  }

  @Post('conventional-mass')
  @ApiOperation({
    summary: 'Conventional mass (OIML D 28) from true mass, or true mass from conventional mass',
    description: `Give exactly one of trueMassG and conventionalMassG; the other is computed and both are returned.\n\n${UNPROCESSABLE}`,
  })
  @ApiExampleBody(ConventionalMassRequestDto, EXAMPLES.conventionalMass)
  @ZodResponse({ status: 200, type: ConventionalMassResponseDto })
  conventionalMass(@Body() body: ConventionalMassRequestDto) {
    return this.calculations.conventionalMass(body);
  }

  @Post('balance-check')
  @ApiOperation({
    summary: 'Balance performance: USP <41> repeatability, accuracy and minimum weight; sensitivity and eccentricity',
    description:
      'Repeatability uses max(s, 0.41 d); the minimum weight is 2000 · that (at least 820 d). Fewer than 10 readings ' +
      `is refused with 422 (USP <41>).\n\n${UNPROCESSABLE}\n\n${CAUTION_LINE}`,
  })
  @ApiExampleBody(BalanceCheckRequestDto, EXAMPLES.balanceCheck)
  @ZodResponse({ status: 200, type: BalanceCheckResponseDto })
  balanceCheck(@Body() body: BalanceCheckRequestDto) {
    return this.balance.check(body);
  }
}
