import { Controller, Get, HttpCode, Param, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { LabParamDto } from '../webhooks/webhook.schemas';
import { DeliveryDto, DeliveryListQueryDto, DeliveryPageDto, DeliveryParamDto } from './delivery.schemas';
import { DeliveryService } from './delivery.service';

@ApiTags('webhooks')
@PeopleOnly()
@Controller('v1/labs/:labId/deliveries')
export class DeliveryController {
  constructor(private readonly deliveries: DeliveryService) {}

  @Get()
  @ApiOperation({
    summary: 'The delivery log of the lab’s notices by webhook and e-mail, newest first (the lab’s managers, administrators, auditors)',
    description:
      'Filter by channel, state, webhook or notice. Each row: attempts, last status and error, next attempt, delivered or failed.',
  })
  @ZodResponse({ status: 200, type: DeliveryPageDto })
  list(@Ctx() ctx: RequestContext, @Param() params: LabParamDto, @Query() query: DeliveryListQueryDto) {
    return this.deliveries.list(ctx, params.labId, query);
  }

  @Post(':deliveryId/redeliver')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Send a failed delivery again, with a fresh round of attempts (the lab’s managers, administrators); audited',
  })
  @ApiResponse({ status: 409, description: 'invalid-state: the delivery is not failed (pending or delivered)' })
  @ZodResponse({ status: 200, type: DeliveryDto })
  redeliver(@Ctx() ctx: RequestContext, @Param() params: DeliveryParamDto) {
    return this.deliveries.redeliver(ctx, params.labId, params.deliveryId);
  }
}
