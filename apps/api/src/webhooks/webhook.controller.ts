import { Body, Controller, Get, Headers, HttpCode, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag, WithLocation } from '../common/http/etag.interceptor';
import {
  CreateWebhookDto,
  IssuedWebhookDto,
  LabParamDto,
  UpdateWebhookDto,
  WebhookDto,
  WebhookListQueryDto,
  WebhookPageDto,
  WebhookParamDto,
} from './webhook.schemas';
import { WebhookService } from './webhook.service';

const SIGNING =
  'Each delivery is a JSON POST signed with HMAC-SHA256 over `<Registry-Timestamp>.<body>` with the secret ' +
  '(`Registry-Signature: sha256=<hex>`); the README shows how to verify it.';

@ApiTags('webhooks')
@PeopleOnly()
@Controller('v1/labs/:labId/webhooks')
export class WebhookController {
  constructor(private readonly webhooks: WebhookService) {}

  @Post()
  @HttpCode(201)
  @WithEtag()
  @WithLocation()
  @ApiOperation({
    summary: 'Register a webhook for the lab’s notices (the lab’s managers, administrators); the signing secret is shown once',
    description: `${SIGNING} The secret is stored encrypted and never shown again: rotate it if it is lost.`,
  })
  @ApiResponse({ status: 409, description: 'webhooks-not-configured: the service has no WEBHOOK_SECRET_KEY' })
  @ZodResponse({ status: 201, type: IssuedWebhookDto })
  create(@Ctx() ctx: RequestContext, @Param() params: LabParamDto, @Body() body: CreateWebhookDto) {
    return this.webhooks.create(ctx, params.labId, body);
  }

  @Get()
  @ApiOperation({ summary: 'The lab’s webhooks, newest first, without secrets (the lab’s managers, administrators, auditors)' })
  @ZodResponse({ status: 200, type: WebhookPageDto })
  list(@Ctx() ctx: RequestContext, @Param() params: LabParamDto, @Query() query: WebhookListQueryDto) {
    return this.webhooks.list(ctx, params.labId, query);
  }

  @Get(':webhookId')
  @WithEtag()
  @ApiOperation({ summary: 'One webhook, without its secret' })
  @ZodResponse({ status: 200, type: WebhookDto })
  get(@Ctx() ctx: RequestContext, @Param() params: WebhookParamDto) {
    return this.webhooks.get(ctx, params.labId, params.webhookId);
  }

  @Patch(':webhookId')
  @NeedsIfMatch()
  @ApiOperation({ summary: 'Change the URL, description, event kinds or switch it on or off (the lab’s managers, administrators)' })
  @ZodResponse({ status: 200, type: WebhookDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: WebhookParamDto,
    @Body() body: UpdateWebhookDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.webhooks.update(ctx, params.labId, params.webhookId, ifMatch, body);
  }

  @Post(':webhookId/rotate-secret')
  @HttpCode(200)
  @WithEtag()
  @ApiOperation({
    summary: 'Issue a new signing secret, shown once; the old one stops signing at once (the lab’s managers, administrators)',
  })
  @ApiResponse({ status: 409, description: 'webhooks-not-configured: the service has no WEBHOOK_SECRET_KEY' })
  @ZodResponse({ status: 200, type: IssuedWebhookDto })
  rotateSecret(@Ctx() ctx: RequestContext, @Param() params: WebhookParamDto) {
    return this.webhooks.rotateSecret(ctx, params.labId, params.webhookId);
  }
}
