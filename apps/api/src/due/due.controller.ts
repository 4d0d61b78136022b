import { Controller, Get, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import type { RequestContext } from '../auth/actor';
import { CredentialScopes, Ctx } from '../auth/auth.decorators';
import { DueListQueryDto, DuePageDto } from './due.schemas';
import { DueService } from './due.service';

const LIST_DOC =
  'Every item not retired and every current personal factor, with its next due date and state in its lab’s time zone: ' +
  '`overdue` after the due date, `due-soon` from the policy’s lead time before it, `current` before that. A never-calibrated ' +
  'item is due from its registration; a failed routine check or a failed calibration makes the item due that day. ' +
  'Ordered by due date. People see their labs’ items, their own factors, and (managers) their lab’s factors; ' +
  'administrators and auditors everything; service credentials with inventory:read their labs’ items.\n\n' +
  'The registry supports, and does not replace, the lab’s quality system and its own recalibration rules.';

@ApiTags('due dates')
@Controller('v1/due')
export class DueController {
  constructor(private readonly due: DueService) {}

  @Get()
  @CredentialScopes('inventory:read')
  @ApiOperation({ summary: 'What falls due: items and personal factors by due date, with filters', description: LIST_DOC })
  @ApiResponse({ status: 400, description: 'validation-failed: a filter is malformed' })
  @ApiResponse({ status: 404, description: 'not-found: labId names a lab you cannot read' })
  @ZodResponse({ status: 200, type: DuePageDto })
  list(@Ctx() ctx: RequestContext, @Query() query: DueListQueryDto) {
    return this.due.list(ctx, query);
  }
}
