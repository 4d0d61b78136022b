import { Body, Controller, Get, Headers, Param, Patch, Post, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag } from '../common/http/etag.interceptor';
import {
  CreatedPersonDto,
  CreatePersonDto,
  PersonDto,
  PersonIdParamDto,
  PersonListQueryDto,
  PersonPageDto,
  UpdatePersonDto,
} from './people.schemas';
import { PeopleService } from './people.service';

@ApiTags('people')
@PeopleOnly()
@Controller('v1/people')
export class PeopleController {
  constructor(private readonly people: PeopleService) {}

  @Post()
  @WithEtag()
  @ApiOperation({
    summary: 'Register a person (administrators); the response shows a one-time password once',
    description: 'The person signs in with it and must then choose their own. 409 when the email is taken.',
  })
  @ZodResponse({ status: 201, type: CreatedPersonDto })
  create(@Ctx() ctx: RequestContext, @Body() body: CreatePersonDto) {
    return this.people.create(ctx, body);
  }

  @Get()
  @ApiOperation({
    summary: 'People you may see, by email',
    description: 'Administrators and auditors see everyone; lab managers the members of their labs; others only themselves.',
  })
  @ZodResponse({ status: 200, type: PersonPageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: PersonListQueryDto) {
    return this.people.list(ctx, query);
  }

  @Get(':personId')
  @WithEtag()
  @ApiOperation({ summary: 'One person (404 when not visible to you)' })
  @ZodResponse({ status: 200, type: PersonDto })
  get(@Ctx() ctx: RequestContext, @Param() params: PersonIdParamDto) {
    return this.people.get(ctx, params.personId);
  }

  @Patch(':personId')
  @NeedsIfMatch()
  @ApiOperation({
    summary: 'Change a person’s name, registry role or status (administrators)',
    description: 'Disabling ends all the person’s sessions at once. The last active administrator cannot be disabled or demoted (409).',
  })
  @ZodResponse({ status: 200, type: PersonDto })
  update(
    @Ctx() ctx: RequestContext,
    @Param() params: PersonIdParamDto,
    @Body() body: UpdatePersonDto,
    @Headers('if-match') ifMatch?: string,
  ) {
    return this.people.update(ctx, params.personId, body, ifMatch);
  }
}
