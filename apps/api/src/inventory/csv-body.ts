import type { FastifyInstance } from 'fastify';

/** CSV uploads (the vessel import) may be larger than JSON bodies. */
export const CSV_BODY_LIMIT_BYTES = 10 * 1024 * 1024;

/** Accepts `text/csv` bodies as one UTF-8 string, up to CSV_BODY_LIMIT_BYTES. */
export function registerCsvBody(fastify: FastifyInstance): void {
  fastify.addContentTypeParser('text/csv', { parseAs: 'string', bodyLimit: CSV_BODY_LIMIT_BYTES }, (_request, body, done) => {
    done(null, body);
  });
}
