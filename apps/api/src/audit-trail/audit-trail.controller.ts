import { Controller, Get, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { AuditTrailQueryDto } from './audit-trail.schemas';
import { AuditTrailService } from './audit-trail.service';

@ApiTags('audit trail')
@PeopleOnly()
@Controller('v1/audit-trail')
export class AuditTrailController {
  constructor(private readonly auditTrail: AuditTrailService) {}

  @Get()
  @ApiOperation({
    summary: 'Read the audit trail, newest first',
    description:
      'Every change, status change, approval and sign-in event, with old and new values, reason and request id. ' +
      'Administrators and auditors read everything; lab managers their labs’ entries.',
  })
  list(@Ctx() ctx: RequestContext, @Query() query: AuditTrailQueryDto) {
    return this.auditTrail.list(ctx, query);
  }

  @Get('verification')
  @ApiOperation({
    summary: 'Walk the hash chain and report the first broken link',
    description:
      'Recomputes each entry’s SHA-256 over its content and its predecessor’s hash. Keep the reported head ' +
      '(sequence and hash): a later verification whose chain no longer contains it shows that entries were removed.',
  })
  verify(@Ctx() ctx: RequestContext) {
    return this.auditTrail.verify(ctx);
  }
}
