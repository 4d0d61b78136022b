import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { CredentialScopes, Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag } from '../common/http/etag.interceptor';
import { CreateLabDto, LabDto, LabIdParamDto, LabListQueryDto, LabPageDto, UpdateLabDto } from './labs.schemas';
import { LabsService } from './labs.service';

@ApiTags('labs')
@Controller('v1/labs')
export class LabsController {
  constructor(private readonly labs: LabsService) {}

  @Post()
  @PeopleOnly()
  @WithEtag()
  @ApiOperation({ summary: 'Create a lab (administrators)', description: 'The code is unique and never changes: 409 when taken.' })
  @ZodResponse({ status: 201, type: LabDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateLabDto) {
    return this.labs.create(ctx, body);
  }

  @Get()
  @CredentialScopes('inventory:read')
  @ApiOperation({
    summary: 'The labs you may read, by code',
    description: 'Everyone sees their own labs; administrators and auditors all.',
  })
  @ZodResponse({ status: 200, type: LabPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: LabListQueryDto) {
    return this.labs.list(ctx, query);
  }

  @Get(':labId')
  @CredentialScopes('inventory:read')
  @WithEtag()
  @ApiOperation({ summary: 'One lab (404 when it is not yours to read)' })
  @ZodResponse({ status: 200, type: LabDto })
  get(@Ctx() ctx: RequestContext, @Param() params: LabIdParamDto) {
    return this.labs.get(ctx, params.labId);
  }

  @Patch(':labId')
  @PeopleOnly()
  @NeedsIfMatch()
  @ApiOperation({ summary: 'Change a lab’s name, time zone or four-eyes rule (administrators)' })
  @ZodResponse({ status: 200, type: LabDto })
  update(@Ctx() ctx: RequestContext, @Param() params: LabIdParamDto, @Body() body: UpdateLabDto, @Headers('if-match') ifMatch?: string) {
    return this.labs.update(ctx, params.labId, body, ifMatch);
  }
}
