import { Module, type OnModuleInit } from '@nestjs/common';
import { HttpAdapterHost } from '@nestjs/core';
import type { FastifyInstance } from 'fastify';

import { ExportController, UPLOAD_TYPES } from './export.controller';
import { ExportRepository } from './export.repository';
import { ExportService } from './export.service';

/** An exported file sent back for verification may be this large; larger ones are verified by their digest. */
export const UPLOAD_LIMIT_BYTES = 64 * 1024 * 1024;

/** Compliance report exports: streamed reports, the export registry and verification of issued files. */
@Module({ controllers: [ExportController], providers: [ExportRepository, ExportService] })
export class ExportsModule implements OnModuleInit {
  constructor(private readonly adapterHost: HttpAdapterHost) {}

  /** Uploaded files arrive as raw bytes (text/csv already has a parser of its own: the vessel import). */
  onModuleInit(): void {
    const fastify = this.adapterHost.httpAdapter.getInstance<FastifyInstance>();
    const types = UPLOAD_TYPES.filter((t) => !fastify.hasContentTypeParser(t));
    if (types.length === 0) return;
    fastify.addContentTypeParser([...types], { parseAs: 'buffer', bodyLimit: UPLOAD_LIMIT_BYTES }, (_request, body, done) => {
      done(null, body);
    });
  }
}
