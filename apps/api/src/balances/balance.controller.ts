import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx } from '../auth/auth.decorators';
import { InventoryCreate, InventoryGet, InventoryRead, InventoryUpdate, ItemIdParamDto } from '../inventory/inventory-http';
import { BalanceDto, BalanceListQueryDto, BalancePageDto, CreateBalanceDto, UpdateBalanceDto } from './balance.schemas';
import { BalanceService } from './balance.service';

@ApiTags('balances')
@Controller('v1/balances')
export class BalanceController {
  constructor(private readonly balances: BalanceService) {}

  @Post()
  @InventoryCreate()
  @ApiOperation({
    summary: 'Register a balance (the lab’s managers, administrators)',
    description: 'Internal adjustment is not a calibration: record the external calibration (certificate, provider, due date).',
  })
  @ZodResponse({ status: 201, type: BalanceDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateBalanceDto) {
    return this.balances.create(ctx, body);
  }

  @Get()
  @InventoryRead()
  @ApiOperation({ summary: 'Balances of the labs you can read: filters (dueBefore = next external calibration), sorting, cursor pages' })
  @ZodResponse({ status: 200, type: BalancePageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: BalanceListQueryDto) {
    return this.balances.list(ctx, query);
  }

  @Get(':id')
  @InventoryGet()
  @ApiOperation({ summary: 'One balance, with its ETag' })
  @ZodResponse({ status: 200, type: BalanceDto })
  get(@Ctx() ctx: RequestContext, @Param() params: ItemIdParamDto) {
    return this.balances.get(ctx, params.id);
  }

  @Patch(':id')
  @InventoryUpdate()
  @ApiOperation({
    summary: 'Change a balance (If-Match required; retire it with status: retired)',
    description: 'Managers and administrators change anything writable; analysts of the lab only location and notes.',
  })
  @ZodResponse({ status: 200, type: BalanceDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: ItemIdParamDto,
    @Body() body: UpdateBalanceDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.balances.update(ctx, params.id, ifMatch, body);
  }
}
