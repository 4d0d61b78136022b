import { Body, Controller, Get, Param, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { WithEtag } from '../common/http/etag.interceptor';
import {
  CreateCredentialDto,
  CredentialDto,
  CredentialIdParamDto,
  CredentialListQueryDto,
  CredentialPageDto,
  IssuedCredentialDto,
} from './credentials.schemas';
import { CredentialsService } from './credentials.service';

@ApiTags('service credentials')
@PeopleOnly()
@Controller('v1/service-credentials')
export class CredentialsController {
  constructor(private readonly credentials: CredentialsService) {}

  @Post()
  @WithEtag()
  @ApiOperation({
    summary: 'Issue a key for another system (administrators); the key is shown once',
    description: 'Send it as `Authorization: Bearer rk_…`. Only its SHA-256 is stored: a lost key cannot be shown again, rotate it.',
  })
  @ZodResponse({ status: 201, type: IssuedCredentialDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreateCredentialDto) {
    return this.credentials.create(ctx, body);
  }

  @Get()
  @ApiOperation({ summary: 'Service credentials, newest first, without secrets (administrators, auditors)' })
  @ZodResponse({ status: 200, type: CredentialPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: CredentialListQueryDto) {
    return this.credentials.list(ctx, query);
  }

  @Get(':credentialId')
  @WithEtag()
  @ApiOperation({ summary: 'One service credential, with its last use (administrators, auditors)' })
  @ZodResponse({ status: 200, type: CredentialDto })
  get(@Ctx() ctx: RequestContext, @Param() params: CredentialIdParamDto) {
    return this.credentials.get(ctx, params.credentialId);
  }

  @Post(':credentialId/rotate')
  @WithEtag()
  @ApiOperation({
    summary: 'Replace the key (administrators): a new credential, the old one revoked in the same step; the new key is shown once',
  })
  @ZodResponse({ status: 201, type: IssuedCredentialDto })
  rotate(@Ctx() ctx: RequestContext, @Param() params: CredentialIdParamDto) {
    return this.credentials.rotate(ctx, params.credentialId);
  }

  @Post(':credentialId/revoke')
  @WithEtag()
  @ApiOperation({ summary: 'Stop a key at once (administrators); revoking it again changes nothing' })
  @ZodResponse({ status: 200, type: CredentialDto })
  revoke(@Ctx() ctx: RequestContext, @Param() params: CredentialIdParamDto) {
    return this.credentials.revoke(ctx, params.credentialId);
  }
}
