import type { LoggerService } from '@nestjs/common';
import pino, { type Logger } from 'pino';

import type { AppConfig } from './config/config.schema';

/** Never let a secret reach a log line, whatever object is logged. */
const REDACT = ['req.headers.authorization', 'req.headers.cookie', '*.password', '*.token', '*.secret', '*.apiKey'];

/** Structured JSON logs; Fastify adds the request id to every request line. */
export function createLogger(config: Pick<AppConfig, 'logLevel'>, destination?: pino.DestinationStream): Logger {
  const options: pino.LoggerOptions = {
    level: config.logLevel,
    base: { service: 'calibration-registry' },
    redact: { paths: REDACT, censor: '[redacted]' },
    timestamp: pino.stdTimeFunctions.isoTime,
  };
  // Asynchronous writes to stdout: under load, lines written while one write is in flight go out
  // together in the next, instead of one system call per request line. pino flushes what is
  // buffered when the process exits.
  return pino(options, destination ?? pino.destination({ dest: 1, sync: false }));
}

/** Routes Nest's own messages (module wiring, route mapping) into the same JSON log. */
export class PinoNestLogger implements LoggerService {
  constructor(private readonly logger: Logger) {}
  log(message: unknown, context?: string) {
    this.logger.debug({ context }, String(message));
  }
  error(message: unknown, trace?: string, context?: string) {
    this.logger.error({ context, trace }, String(message));
  }
  warn(message: unknown, context?: string) {
    this.logger.warn({ context }, String(message));
  }
  debug(message: unknown, context?: string) {
    this.logger.debug({ context }, String(message));
  }
  verbose(message: unknown, context?: string) {
    this.logger.trace({ context }, String(message));
  }
}
