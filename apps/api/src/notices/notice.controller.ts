import { Controller, Get, HttpCode, Param, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NoticeDto, NoticeListQueryDto, NoticePageDto, NoticeParamDto } from './notice.schemas';
import { NoticeService } from './notice.service';

@ApiTags('notices')
@Controller('v1/notices')
export class NoticeController {
  constructor(private readonly notices: NoticeService) {}

  @Get()
  @PeopleOnly()
  @ApiOperation({
    summary: 'Notices raised when something falls due, newest first',
    description:
      'One notice per subject, event (`due-soon`, `overdue`) and due cycle. You see the notices addressed to you; managers ' +
      'also all of their lab’s; administrators and auditors all.',
  })
  @ApiResponse({ status: 400, description: 'validation-failed: a filter is malformed' })
  @ZodResponse({ status: 200, type: NoticePageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: NoticeListQueryDto) {
    return this.notices.list(ctx, query);
  }

  @Post(':noticeId/acknowledge')
  @PeopleOnly()
  @HttpCode(200)
  @ApiOperation({
    summary: 'Acknowledge a notice (once; who and when are recorded and audited)',
    description: 'For its recipients, the lab’s managers and administrators.',
  })
  @ApiResponse({ status: 403, description: 'forbidden: auditors read notices but do not acknowledge them' })
  @ApiResponse({ status: 404, description: 'not-found: no such notice, or not one you can see' })
  @ApiResponse({ status: 409, description: 'invalid-state: already acknowledged' })
  @ZodResponse({ status: 200, type: NoticeDto })
  acknowledge(@Ctx() ctx: RequestContext, @Param() params: NoticeParamDto) {
    return this.notices.acknowledge(ctx, params.noticeId);
  }
}
