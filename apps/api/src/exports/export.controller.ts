import { Body, Controller, Get, HttpCode, Param, Post, Query, Res } from '@nestjs/common';
import { ApiBody, ApiOperation, ApiProduces, ApiResponse, ApiTags } from '@nestjs/swagger';
import type { FastifyReply } from 'fastify';

import type { RequestContext } from '../auth/actor';
import { Ctx, PeopleOnly } from '../auth/auth.decorators';
import { DomainError } from '../common/problem/domain-error';
import { PDF_CAUTION, PDF_TIME_NOTE } from './pdf-writer';
import { CreateExportDto, ExportListQueryDto, ExportParamDto, VerifyDigestDto } from './export.schemas';
import { ExportService } from './export.service';

const WHO = 'Administrators and auditors: every lab; lab managers: the labs they manage; nobody else.';

const CREATE_DOC =
  'Streams one compliance report as CSV (RFC 4180, UTF-8, a header row, ISO 8601 instants in UTC, decimals as stored), ' +
  'NDJSON (one object per row) or PDF (title page, summary counts, a chart of item states per lab, the table with its ' +
  'header on every page, page numbers). Rows are read as of `asOf` (default now): rows recorded, submitted, reviewed, voided ' +
  'or ended later are left out, so the same request with the same `asOf` gives the same bytes. The PDF shows the as-of ' +
  `instant and the requester; ${PDF_TIME_NOTE}\n\n` +
  'Every export is recorded (GET /v1/exports, `Export-Id` and `Location` headers) with the SHA-256 of the bytes delivered ' +
  'once the last byte has been handed over, and audited; an export the client abandons is recorded as aborted and its ' +
  'query is stopped. The audit-trail report carries the hash-chain verification up to `asOf` (PDF summary page, the ' +
  '`Audit-Chain` header and the export record).\n\n' +
  `${WHO}\n\n${PDF_CAUTION}`;

/** Types an uploaded file may be sent as for verification. */
export const UPLOAD_TYPES = ['application/octet-stream', 'application/pdf', 'application/x-ndjson', 'text/csv'] as const;

@ApiTags('exports')
@PeopleOnly()
@Controller('v1/exports')
export class ExportController {
  constructor(private readonly exports: ExportService) {}

  @Post()
  @ApiOperation({ summary: 'Stream a compliance report (CSV, NDJSON or PDF), recorded with its SHA-256', description: CREATE_DOC })
  @ApiProduces('text/csv', 'application/x-ndjson', 'application/pdf')
  @ApiResponse({ status: 200, description: 'The report, streamed' })
  @ApiResponse({
    status: 400,
    description: 'validation-failed: unknown report or format, a period that ends before it starts, asOf in the future',
  })
  @ApiResponse({ status: 403, description: 'forbidden: not an administrator, auditor or lab manager; a lab you do not manage' })
  @ApiResponse({ status: 404, description: 'not-found: a lab that does not exist or that you cannot read' })
  async create(@Ctx() ctx: RequestContext, @Body() body: CreateExportDto, @Res() reply: FastifyReply): Promise<void> {
    const started = await this.exports.start(ctx, body);
    reply.raw.once('close', () => void started.settle(reply.raw.writableFinished));
    reply
      .status(200)
      .header('content-type', started.contentType)
      .header('content-disposition', `attachment; filename="${started.fileName}"`)
      .header('cache-control', 'no-store')
      .header('export-id', started.record.id)
      .header('location', `/v1/exports/${started.record.id}`);
    const chain = started.chain;
    if (chain) {
      reply.header(
        'audit-chain',
        chain.intact
          ? `intact; entries=${chain.entriesChecked}; head-seq=${chain.head?.seq ?? 0}; head-sha256=${chain.head?.hash ?? ''}`
          : `broken; seq=${chain.firstBroken?.seq ?? 0}; problem=${chain.firstBroken?.problem ?? ''}`,
      );
    }
    await reply.send(started.body);
  }

  @Get()
  @ApiOperation({
    summary: 'Exports, newest first, cursor pages',
    description: `Lab managers see exports confined to labs they manage. ${WHO}`,
  })
  list(@Ctx() ctx: RequestContext, @Query() query: ExportListQueryDto) {
    return this.exports.list(ctx, query);
  }

  @Post('verification')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Was a file with this SHA-256 issued by the registry, and when?',
    description: `Answers \`issued\` and the matching completed exports (when, by whom, what was asked). ${WHO}`,
  })
  verifyDigest(@Ctx() ctx: RequestContext, @Body() body: VerifyDigestDto) {
    return this.exports.verifyDigest(ctx, body.sha256);
  }

  @Post('verification/file')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Was this file issued by the registry, and when? (the file as the body)',
    description:
      `Send the exported file itself as the body (${UPLOAD_TYPES.join(', ')}; at most 64 MiB, for a larger file send its ` +
      `SHA-256 to POST /v1/exports/verification). ${WHO}`,
  })
  @ApiBody({ description: 'The exported file, byte for byte', required: true })
  verifyFile(@Ctx() ctx: RequestContext, @Body() body: unknown) {
    const bytes = typeof body === 'string' ? Buffer.from(body, 'utf8') : Buffer.isBuffer(body) ? body : null;
    if (bytes === null) {
      throw new DomainError('unsupported-media-type', `Send the file as the body with Content-Type ${UPLOAD_TYPES.join(', ')}.`);
    }
    if (bytes.length === 0) throw new DomainError('validation-failed', 'The body is empty.', [{ field: 'body', reason: 'is empty' }]);
    return this.exports.verifyFile(ctx, bytes);
  }

  @Get(':exportId')
  @ApiOperation({ summary: 'One export: what was asked, when it ran, how it ended and its SHA-256', description: WHO })
  get(@Ctx() ctx: RequestContext, @Param() params: ExportParamDto) {
    return this.exports.get(ctx, params.exportId);
  }
}
