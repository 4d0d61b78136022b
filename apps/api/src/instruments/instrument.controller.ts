import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx } from '../auth/auth.decorators';
import { InventoryCreate, InventoryGet, InventoryRead, InventoryUpdate, ItemIdParamDto } from '../inventory/inventory-http';
import { CreateInstrumentDto, InstrumentDto, InstrumentListQueryDto, InstrumentPageDto, UpdateInstrumentDto } from './instrument.schemas';
import { InstrumentService } from './instrument.service';

@ApiTags('environment instruments')
@Controller('v1/instruments')
export class InstrumentController {
  constructor(private readonly instruments: InstrumentService) {}

  @Post()
  @InventoryCreate()
  @ApiOperation({
    summary: 'Register a thermometer, barometer, hygrometer or thermohygrometer (the lab’s managers, administrators)',
    description: 'A calibration is only as traceable as the instruments used: record each one’s certificate and due date.',
  })
  @ZodResponse({ status: 201, type: InstrumentDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateInstrumentDto) {
    return this.instruments.create(ctx, body);
  }

  @Get()
  @InventoryRead()
  @ApiOperation({ summary: 'Instruments of the labs you can read: filters (dueBefore = calibration due), sorting, cursor pages' })
  @ZodResponse({ status: 200, type: InstrumentPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: InstrumentListQueryDto) {
    return this.instruments.list(ctx, query);
  }

  @Get(':id')
  @InventoryGet()
  @ApiOperation({ summary: 'One instrument, with its ETag' })
  @ZodResponse({ status: 200, type: InstrumentDto })
  get(@Ctx() ctx: RequestContext, @Param() params: ItemIdParamDto) {
    return this.instruments.get(ctx, params.id);
  }

  @Patch(':id')
  @InventoryUpdate()
  @ApiOperation({
    summary: 'Change an instrument (If-Match required; retire it with status: retired)',
    description: 'Managers and administrators change anything writable; analysts of the lab only location and notes.',
  })
  @ZodResponse({ status: 200, type: InstrumentDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: ItemIdParamDto,
    @Body() body: UpdateInstrumentDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.instruments.update(ctx, params.id, ifMatch, body);
  }
}
