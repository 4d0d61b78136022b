import { Body, Controller, Get, Headers, HttpCode, Param, Post, Query, Res } from '@nestjs/common';
import { ApiHeader, ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import type { FastifyReply } from 'fastify';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { CredentialScopes, Ctx } from '../auth/auth.decorators';
import { sendConditional } from './conditional-get';
import { FactorCorrectionService } from './factor-correction.service';
import { FactorLookupService } from './factor-lookup.service';
import {
  CorrectionDto,
  CorrectionRequestDto,
  CurrentFactorDto,
  CurrentFactorQueryDto,
  FactorDto,
  FactorIdParamDto,
  FactorListQueryDto,
  FactorPageDto,
} from './factor.schemas';
import { FactorsService } from './factors.service';

const WHO =
  'Service credentials need the scope and the vessel’s lab; people may ask for their own factors, a lab’s managers for the lab’s, ' +
  'administrators and auditors for all. Anyone else’s factor, or a vessel of a lab you cannot read, answers 404.';
const PROBLEMS =
  'Problems, each with its own `code`: not-found (404), no-factor (404), factor-expired (409, with `validUntil`), ' +
  'vessel-not-in-service (409, with `vesselStatus`; no fallback), person-not-active (409, a disabled person; no fallback), ' +
  'person-not-member (422; no fallback). ' +
  'With the nominal fallback asked for, no-factor and factor-expired become an answer marked `source: "nominal-fallback"`.';
const IF_NONE_MATCH = ApiHeader({ name: 'If-None-Match', required: false, description: 'An ETag you hold: 304 when it is still current' });

@ApiTags('factors')
@Controller('v1/factors')
export class FactorsController {
  constructor(
    private readonly factors: FactorsService,
    private readonly lookup: FactorLookupService,
    private readonly corrections: FactorCorrectionService,
  ) {}

  @Get()
  @CredentialScopes('factors:read')
  @ApiOperation({ summary: 'Personal factors you may read, newest first (history included)', description: WHO })
  @ZodResponse({ status: 200, type: FactorPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: FactorListQueryDto) {
    return this.factors.list(ctx, query);
  }

  @Get('current')
  @CredentialScopes('factors:read')
  @IF_NONE_MATCH
  @ApiOperation({
    summary: 'The factor a person uses on a vessel, now or at an instant',
    description:
      'Name the person by personId, email or externalRef (the id the vessel’s lab gave them) and the vessel by vesselId or assetTag. ' +
      '`at` returns the factor that was in force then (issued by then, valid, not yet superseded or withdrawn), whatever the vessel’s status now. ' +
      `ETag and Cache-Control: private, max-age=60, must-revalidate. ${WHO} ${PROBLEMS}`,
  })
  @ApiResponse({ status: 200, type: CurrentFactorDto.Output })
  @ApiResponse({ status: 304, description: 'If-None-Match names the current ETag' })
  async current(
    @Ctx() ctx: RequestContext,
    @Query() query: CurrentFactorQueryDto,
    @Headers('if-none-match') ifNoneMatch: string | undefined,
    @Res() reply: FastifyReply,
  ): Promise<void> {
    const { view, etag } = await this.lookup.current(ctx, query);
    sendConditional(reply, view, etag, ifNoneMatch);
  }

  @Post('corrections')
  @CredentialScopes('corrections:write')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Correct a reading with the person’s own factor: the volume at 20 °C and its expanded uncertainty',
    description:
      'One-mark ware: nominal × factor (the indicated volume must be the nominal volume). Graduated ware: the correction ' +
      'interpolated linearly between the two neighbouring calibrated points, with the larger of their expanded uncertainties; ' +
      'never extrapolated (422 naming indicatedVolumeMl and the calibrated range). With liquidTemperatureC, also the volume ' +
      'with the glass at that temperature: V_t = V20 · [1 + γ (t − 20 °C)] (the liquid’s own expansion is not applied). ' +
      `${WHO} ${PROBLEMS}`,
  })
  @ApiResponse({ status: 200, type: CorrectionDto.Output })
  correct(@Ctx() ctx: RequestContext, @Body() body: CorrectionRequestDto) {
    // Not serialised through zod on this hot path: the result is typed by the same schema (z.infer).
    return this.corrections.correct(ctx, body);
  }

  @Get(':id')
  @CredentialScopes('factors:read')
  @IF_NONE_MATCH
  @ApiOperation({ summary: 'One factor, with its ETag', description: WHO })
  @ApiResponse({ status: 200, type: FactorDto.Output })
  @ApiResponse({ status: 304, description: 'If-None-Match names the current ETag' })
  async get(
    @Ctx() ctx: RequestContext,
    @Param() params: FactorIdParamDto,
    @Headers('if-none-match') ifNoneMatch: string | undefined,
    @Res() reply: FastifyReply,
  ): Promise<void> {
    const { view, etag } = await this.factors.get(ctx, params.id);
    sendConditional(reply, view, etag, ifNoneMatch);
  }
}
