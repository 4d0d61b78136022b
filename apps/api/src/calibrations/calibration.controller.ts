import { Body, Controller, Get, Headers, HttpCode, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiBody, ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag, WithLocation } from '../common/http/etag.interceptor';
import { ApprovalDto, CalibrationDto, CalibrationPageDto, VoidedDto } from './calibration.responses';
import {
  ApproveCalibrationDto,
  CalibrationIdParamDto,
  CalibrationListQueryDto,
  CreateCalibrationDto,
  ReturnCalibrationDto,
  SubmitCalibrationDto,
  UpdateCalibrationDto,
  VoidCalibrationDto,
} from './calibration.schemas';
import { CalibrationService } from './calibration.service';
import { CalibrationReview } from './calibration-review.service';
import { CalibrationSubmission } from './calibration-submission.service';

const STATE_409 = { status: 409, description: 'invalid-state: the record’s state does not allow this (`state` names it)' } as const;
const IF_MATCH = [
  { status: 412, description: 'precondition-failed: the record changed since you read it' },
  { status: 428, description: 'precondition-required: send If-Match' },
] as const;

/** Gravimetric calibration records: draft → submitted → approved | returned; voided with a reason. */
@ApiTags('calibrations')
@PeopleOnly()
@Controller('v1/calibrations')
export class CalibrationController {
  constructor(
    private readonly calibrations: CalibrationService,
    private readonly submission: CalibrationSubmission,
    private readonly review: CalibrationReview,
  ) {}

  @Post()
  @WithEtag()
  @WithLocation()
  @ApiOperation({
    summary: 'Record a calibration as a draft (analysts and managers of the vessel’s lab)',
    description:
      'performerId defaults to you; a manager of the lab may enter it for an analyst or manager of the lab (both are recorded). ' +
      'One point at the nominal volume for one-mark ware; two or more distinct volumes up to the nominal for burettes, graduated pipettes, ' +
      'graduated cylinders and variable piston pipettes. Readings follow the vessel’s delivery mode. Quantities are checked by the ' +
      'computation library at once (422 naming the field); results are computed and frozen at submission.',
  })
  @ApiResponse({ status: 400, description: 'validation-failed: members, points or readings that do not fit the vessel, named in `errors`' })
  @ApiResponse({ status: 403, description: 'forbidden: auditors, analysts for someone else, people outside the lab who can read it' })
  @ApiResponse({ status: 404, description: 'not-found: no vessel with that id in a lab you can read' })
  @ApiResponse({ status: 422, description: 'unprocessable-quantity: a value the method refuses' })
  @ZodResponse({ status: 201, type: CalibrationDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateCalibrationDto) {
    return this.calibrations.create(ctx, body);
  }

  @Get()
  @ApiOperation({ summary: 'Calibrations of the labs you can read, newest performed first (cursor pages)' })
  @ZodResponse({ status: 200, type: CalibrationPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: CalibrationListQueryDto) {
    return this.calibrations.list(ctx, query);
  }

  @Get(':id')
  @WithEtag()
  @ApiOperation({ summary: 'One calibration with its inputs and, once submitted, its frozen results' })
  @ZodResponse({ status: 200, type: CalibrationDto })
  get(@Ctx() ctx: RequestContext, @Param() params: CalibrationIdParamDto) {
    return this.calibrations.get(ctx, params.id);
  }

  @Patch(':id')
  @NeedsIfMatch()
  @ApiOperation({
    summary: 'Change a draft or returned calibration (its performer, or the manager who entered it)',
    description: 'Given members replace the stored ones (points as a whole). After submission the record is frozen: 409.',
  })
  @ApiResponse(STATE_409)
  @ApiResponse(IF_MATCH[0])
  @ApiResponse(IF_MATCH[1])
  @ZodResponse({ status: 200, type: CalibrationDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: CalibrationIdParamDto,
    @Body() body: UpdateCalibrationDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.calibrations.update(ctx, params.id, ifMatch, body);
  }

  @Post(':id/submit')
  @HttpCode(200)
  @NeedsIfMatch()
  @ApiOperation({
    summary: 'Submit: check traceability, compute every point, freeze inputs and results with the library version',
    description:
      'Rules, as of performedAt: the vessel, balance and thermometer are in service; the balance’s external calibration and the ' +
      'thermometer’s calibration are not overdue (due date on or after the performance date in the lab’s zone); the balance’s ' +
      'latest routine check at or before the performance passed and is within the lab’s window. A broken rule gives 422 ' +
      '`traceability-violation` listing each; a lab that allows exceptions accepts `exceptionReason` (never for the vessel ' +
      'itself or a retired item), recorded with the calibration and in the audit trail.',
  })
  @ApiBody({ type: SubmitCalibrationDto, required: false })
  @ApiResponse({ status: 422, description: 'traceability-violation: `violations` lists { rule, itemId, detail, exceptionAllowed }' })
  @ApiResponse(STATE_409)
  @ZodResponse({ status: 200, type: CalibrationDto })
  submit(
    @Ctx() ctx: RequestContext,
    @Param() params: CalibrationIdParamDto,
    @Body() body: SubmitCalibrationDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.submission.submit(ctx, params.id, ifMatch, body);
  }

  @Post(':id/approve')
  @HttpCode(200)
  @NeedsIfMatch()
  @ApiOperation({
    summary: 'Approve a submitted calibration (the lab’s managers, administrators)',
    description:
      'With the lab’s four-eyes rule (the default) the reviewer is neither the performer nor the person who entered it (403 four-eyes). ' +
      'A passing or no-limit calibration becomes the performer’s factor for the vessel in the same transaction (the previous one ' +
      'superseded, kept as history). A failed one gives no factor: the vessel’s current factors are marked for review and, where ' +
      'the lab says so, the vessel is quarantined; `impact` lists what changed. A factor from a calibration that a later failed ' +
      'routine check of its balance, or a later out-of-tolerance finding of its thermometer, already reached is issued marked for review.',
  })
  @ApiBody({ type: ApproveCalibrationDto, required: false })
  @ApiResponse({ status: 403, description: 'forbidden (not a manager of the lab) or four-eyes' })
  @ApiResponse(STATE_409)
  @ZodResponse({ status: 200, type: ApprovalDto })
  approve(
    @Ctx() ctx: RequestContext,
    @Param() params: CalibrationIdParamDto,
    @Body() body: ApproveCalibrationDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.review.approve(ctx, params.id, ifMatch, body.note);
  }

  @Post(':id/return')
  @HttpCode(200)
  @NeedsIfMatch()
  @ApiOperation({ summary: 'Return a submitted calibration to its performer with a note (same reviewers as approval)' })
  @ApiResponse({ status: 403, description: 'forbidden (not a manager of the lab) or four-eyes' })
  @ApiResponse(STATE_409)
  @ZodResponse({ status: 200, type: CalibrationDto })
  sendBack(
    @Ctx() ctx: RequestContext,
    @Param() params: CalibrationIdParamDto,
    @Body() body: ReturnCalibrationDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.review.sendBack(ctx, params.id, ifMatch, body.note);
  }

  @Post(':id/void')
  @HttpCode(200)
  @NeedsIfMatch()
  @ApiOperation({
    summary: 'Void a calibration with a reason (the lab’s managers and administrators; its performer for their own draft)',
    description: 'Nothing is deleted. Voiding an approved calibration withdraws its factor if it is current.',
  })
  @ApiResponse(STATE_409)
  @ZodResponse({ status: 200, type: VoidedDto })
  void(
    @Ctx() ctx: RequestContext,
    @Param() params: CalibrationIdParamDto,
    @Body() body: VoidCalibrationDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.review.void(ctx, params.id, ifMatch, body.reason);
  }
}
