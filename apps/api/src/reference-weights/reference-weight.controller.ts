import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx } from '../auth/auth.decorators';
import { InventoryCreate, InventoryGet, InventoryRead, InventoryUpdate, ItemIdParamDto } from '../inventory/inventory-http';
import {
  CreateReferenceWeightDto,
  ReferenceWeightDto,
  ReferenceWeightListQueryDto,
  ReferenceWeightPageDto,
  UpdateReferenceWeightDto,
} from './reference-weight.schemas';
import { ReferenceWeightService } from './reference-weight.service';

@ApiTags('reference weights')
@Controller('v1/reference-weights')
export class ReferenceWeightController {
  constructor(private readonly weights: ReferenceWeightService) {}

  @Post()
  @InventoryCreate()
  @ApiOperation({
    summary: 'Register a reference (check) weight (the lab’s managers, administrators)',
    description: 'Conventional mass and its expanded uncertainty are copied from the calibration certificate.',
  })
  @ZodResponse({ status: 201, type: ReferenceWeightDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateReferenceWeightDto) {
    return this.weights.create(ctx, body);
  }

  @Get()
  @InventoryRead()
  @ApiOperation({ summary: 'Reference weights of the labs you can read: filters (dueBefore = certificate due), sorting, cursor pages' })
  @ZodResponse({ status: 200, type: ReferenceWeightPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: ReferenceWeightListQueryDto) {
    return this.weights.list(ctx, query);
  }

  @Get(':id')
  @InventoryGet()
  @ApiOperation({ summary: 'One reference weight, with its ETag' })
  @ZodResponse({ status: 200, type: ReferenceWeightDto })
  get(@Ctx() ctx: RequestContext, @Param() params: ItemIdParamDto) {
    return this.weights.get(ctx, params.id);
  }

  @Patch(':id')
  @InventoryUpdate()
  @ApiOperation({
    summary: 'Change a reference weight (If-Match required; retire it with status: retired)',
    description: 'Managers and administrators change anything writable; analysts of the lab only location and notes.',
  })
  @ZodResponse({ status: 200, type: ReferenceWeightDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: ItemIdParamDto,
    @Body() body: UpdateReferenceWeightDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.weights.update(ctx, params.id, ifMatch, body);
  }
}
