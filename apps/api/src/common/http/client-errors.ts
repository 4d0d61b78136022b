import { STATUS_CODES } from 'node:http';
import type { Duplex } from 'node:stream';

import { DomainError } from '../problem/domain-error';
import type { ProblemCode } from '../problem/problem-catalog';
import { PROBLEM_CONTENT_TYPE } from '../problem/problem.filter';
import { toProblem } from '../problem/to-problem';

/**
 * Requests Node's HTTP parser refuses before Fastify sees them (headers over
 * 16 KiB, a malformed request line, headers that never arrive) are answered
 * on the socket as problem details too, like every other error.
 */
export function answerClientError(error: Error & { code?: string }, socket: Duplex): void {
  if (error.code === 'ECONNRESET' || socket.destroyed) return;
  const code: ProblemCode =
    error.code === 'HPE_HEADER_OVERFLOW'
      ? 'headers-too-large'
      : error.code === 'ERR_HTTP_REQUEST_TIMEOUT'
        ? 'request-timeout'
        : 'malformed-request';
  const { problem } = toProblem(new DomainError(code, PROBLEM_DETAIL[code] ?? 'The request could not be read.'), {});
  const body = JSON.stringify(problem);
  if (socket.writable) {
    socket.write(
      `HTTP/1.1 ${problem.status} ${STATUS_CODES[problem.status] ?? ''}\r\nContent-Type: ${PROBLEM_CONTENT_TYPE}\r\n` +
        `Content-Length: ${Buffer.byteLength(body)}\r\nConnection: close\r\n\r\n${body}`,
    );
  }
  socket.destroy(error);
}

const PROBLEM_DETAIL: Partial<Record<ProblemCode, string>> = {
  'headers-too-large': 'The request line and headers exceed 16 KiB: shorten the query string.',
  'request-timeout': 'The request headers did not arrive in time.',
  'malformed-request': 'The request is not valid HTTP.',
};
