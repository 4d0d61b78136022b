import { Body, Controller, Get, Headers, HttpCode, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiBody, ApiConsumes, ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { InventoryCreate, InventoryGet, InventoryRead, InventoryUpdate, ItemIdParamDto } from '../inventory/inventory-http';
import { CreateVesselDto, UpdateVesselDto, VesselDto, VesselListQueryDto, VesselPageDto } from './vessel.schemas';
import { VesselService } from './vessel.service';
import { IMPORT_DOC, IMPORT_EXAMPLE, VesselImportQueryDto, VesselImportResultDto } from './vessel-import.schemas';
import { VesselImportService } from './vessel-import.service';

@ApiTags('vessels')
@Controller('v1/vessels')
export class VesselController {
  constructor(
    private readonly vessels: VesselService,
    private readonly importer: VesselImportService,
  ) {}

  @Post()
  @InventoryCreate()
  @ApiOperation({
    summary: 'Register a vessel (the lab’s managers, administrators)',
    description:
      'The delivery mode follows from the kind where it is fixed; the expansion coefficient from the material (or give it); ' +
      'the acceptance limit is the published class limit when the tables have one (limitSource class-table, limitReference names the table), ' +
      'the lab’s override when limitOverrideMl and limitOverrideReason are given, else none.',
  })
  @ZodResponse({ status: 201, type: VesselDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateVesselDto) {
    return this.vessels.create(ctx, body);
  }

  @Post('import')
  @PeopleOnly()
  @HttpCode(201)
  @ApiConsumes('text/csv')
  @ApiBody({ description: IMPORT_DOC, schema: { type: 'string', example: IMPORT_EXAMPLE } })
  @ApiOperation({ summary: 'Import vessels from CSV into one lab: every row or none', description: IMPORT_DOC })
  @ApiResponse({
    status: 422,
    description: 'The file was refused: `errors` lists `{ row, field, reason }` (first 200), `totalErrors` counts all',
  })
  @ZodResponse({ status: 201, type: VesselImportResultDto })
  import(@Ctx() ctx: RequestContext, @Query() query: VesselImportQueryDto, @Body() body: unknown) {
    return this.importer.import(ctx, query.labId, body);
  }

  @Get()
  @InventoryRead()
  @ApiOperation({ summary: 'Vessels of the labs you can read: filters, sorting, cursor pages' })
  @ZodResponse({ status: 200, type: VesselPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: VesselListQueryDto) {
    return this.vessels.list(ctx, query);
  }

  @Get(':id')
  @InventoryGet()
  @ApiOperation({ summary: 'One vessel, with its ETag' })
  @ZodResponse({ status: 200, type: VesselDto })
  get(@Ctx() ctx: RequestContext, @Param() params: ItemIdParamDto) {
    return this.vessels.get(ctx, params.id);
  }

  @Patch(':id')
  @InventoryUpdate()
  @ApiOperation({
    summary: 'Change a vessel (If-Match required; retire it with status: retired)',
    description: 'Managers and administrators change anything writable; analysts of the lab only location and notes.',
  })
  @ZodResponse({ status: 200, type: VesselDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: ItemIdParamDto,
    @Body() body: UpdateVesselDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.vessels.update(ctx, params.id, ifMatch, body);
  }
}
