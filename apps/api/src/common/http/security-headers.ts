import type { FastifyInstance } from 'fastify';

const API_CSP = "default-src 'none'; frame-ancestors 'none'";
// The interactive docs load their own scripts and styles from /docs.
const DOCS_CSP =
  "default-src 'self'; img-src 'self' data:; style-src 'self' 'unsafe-inline'; script-src 'self' 'unsafe-inline'; frame-ancestors 'none'";

/** Security headers on every response, and the request id echoed back. */
export function registerResponseHeaders(fastify: FastifyInstance): void {
  fastify.addHook('onSend', async (request, reply, payload) => {
    reply.header('x-request-id', String(request.id));
    reply.header('x-content-type-options', 'nosniff');
    reply.header('x-frame-options', 'DENY');
    reply.header('referrer-policy', 'no-referrer');
    reply.header('cross-origin-opener-policy', 'same-origin');
    reply.header('cross-origin-resource-policy', 'same-origin');
    reply.header('strict-transport-security', 'max-age=31536000; includeSubDomains');
    reply.header('permissions-policy', 'camera=(), microphone=(), geolocation=()');
    reply.header('content-security-policy', request.url.startsWith('/docs') ? DOCS_CSP : API_CSP);
    if (!reply.hasHeader('cache-control')) reply.header('cache-control', 'no-store');
    reply.removeHeader('x-powered-by');
    return payload;
  });
}
