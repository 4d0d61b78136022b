import { Controller, Get } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { Pool } from 'pg';

import { DomainError } from '../common/problem/domain-error';
import { Public } from '../auth/auth.decorators';

const READY_TIMEOUT_MS = 2_000;

@ApiTags('health')
@Controller('health')
@Public()
export class HealthController {
  constructor(private readonly pool: Pool) {}

  @Get('live')
  @ApiOperation({ summary: 'The process is up (no dependency checked)' })
  live() {
    return { status: 'live' };
  }

  @Get('ready')
  @ApiOperation({ summary: 'The service can serve requests: the database answers' })
  async ready() {
    const started = process.hrtime.bigint();
    try {
      await withTimeout(this.pool.query('SELECT 1'), READY_TIMEOUT_MS);
    } catch {
      throw new DomainError(
        'service-unavailable',
        'The database does not answer.',
        undefined,
        { checks: { database: 'down' } },
        { 'retry-after': '2' },
      );
    }
    const ms = Number(process.hrtime.bigint() - started) / 1e6;
    return { status: 'ready', checks: { database: 'up' }, databaseLatencyMs: Math.round(ms * 100) / 100 };
  }
}

function withTimeout<T>(promise: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => (timer = setTimeout(() => reject(new Error('timeout')), ms)));
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}
