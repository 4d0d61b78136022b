import { Controller, Get, Param } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';

import { DomainError } from './domain-error';
import { PROBLEM_CATALOG, type ProblemCode, problemTypeUri } from './problem-catalog';
import { Public } from '../../auth/auth.decorators';

/** Makes every problem `type` URI dereferenceable: what the code means and its status. */
@ApiTags('problems')
@Controller('problems')
@Public()
export class ProblemTypesController {
  @Get()
  @ApiOperation({ summary: 'List every problem type the API can answer with' })
  list() {
    return Object.entries(PROBLEM_CATALOG).map(([code, entry]) => ({ type: problemTypeUri(code as ProblemCode), code, ...entry }));
  }

  @Get(':code')
  @ApiOperation({ summary: 'Describe one problem type' })
  describe(@Param('code') code: string) {
    if (!Object.hasOwn(PROBLEM_CATALOG, code)) throw new DomainError('not-found', `No problem type "${code}".`);
    return { type: problemTypeUri(code as ProblemCode), code, ...PROBLEM_CATALOG[code as ProblemCode] };
  }
}
