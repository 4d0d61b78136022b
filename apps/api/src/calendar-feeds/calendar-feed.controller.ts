import { Body, Controller, Get, HttpCode, Param, Post, Query, Res } from '@nestjs/common';
import { ApiOperation, ApiProduces, ApiResponse, ApiTags } from '@nestjs/swagger';
import type { FastifyReply } from 'fastify';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly, Public } from '../auth/auth.decorators';
import {
  CreatedFeedDto,
  CreateFeedDto,
  FeedDto,
  FeedLabParamDto,
  FeedListQueryDto,
  FeedPageDto,
  FeedParamDto,
  FeedQueryDto,
} from './calendar-feed.schemas';
import { CalendarFeedService } from './calendar-feed.service';

@ApiTags('due dates')
@Controller('v1')
export class CalendarFeedController {
  constructor(private readonly feeds: CalendarFeedService) {}

  @Post('labs/:labId/calendar-feeds')
  @PeopleOnly()
  @HttpCode(201)
  @ApiOperation({
    summary: 'Create a calendar feed of the lab’s due dates (managers, administrators); the token is shown once',
    description:
      'Anyone with the token can read the feed (a calendar program cannot sign in): share it like a password and revoke it when in doubt.',
  })
  @ZodResponse({ status: 201, type: CreatedFeedDto })
  create(@Ctx() ctx: RequestContext, @Param() params: FeedLabParamDto, @Body() body: CreateFeedDto) {
    return this.feeds.create(ctx, params.labId, body);
  }

  @Get('labs/:labId/calendar-feeds')
  @PeopleOnly()
  @ApiOperation({ summary: 'The lab’s calendar feeds, without their tokens (managers, administrators, auditors)' })
  @ZodResponse({ status: 200, type: FeedPageDto })
  list(@Ctx() ctx: RequestContext, @Param() params: FeedLabParamDto, @Query() query: FeedListQueryDto) {
    return this.feeds.list(ctx, params.labId, query);
  }

  @Post('labs/:labId/calendar-feeds/:feedId/revoke')
  @PeopleOnly()
  @HttpCode(200)
  @ApiOperation({ summary: 'Revoke a calendar feed: its token gets 404 from now on' })
  @ApiResponse({ status: 409, description: 'invalid-state: already revoked' })
  @ZodResponse({ status: 200, type: FeedDto })
  revoke(@Ctx() ctx: RequestContext, @Param() params: FeedParamDto) {
    return this.feeds.revoke(ctx, params.labId, params.feedId);
  }

  @Get('calendar-feed.ics')
  @Public()
  @ApiProduces('text/calendar')
  @ApiOperation({
    summary: 'A lab’s due dates as iCalendar (RFC 5545), for calendar programs',
    description:
      'One all-day event per subject on its due date; the UID stays the same for a subject and due cycle. Unknown or revoked token: 404.',
  })
  @ApiResponse({ status: 200, description: 'text/calendar' })
  @ApiResponse({ status: 404, description: 'not-found: no feed with that token, or it was revoked' })
  async feed(@Query() query: FeedQueryDto, @Res({ passthrough: true }) reply: FastifyReply): Promise<string> {
    const text = await this.feeds.render(query.token);
    void reply.header('content-type', 'text/calendar; charset=utf-8').header('cache-control', 'private, max-age=300');
    return text;
  }
}
