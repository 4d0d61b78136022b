import { MetrologyInputError } from '@registry/metrology';

import { DomainError } from './domain-error';
import { toProblem } from './to-problem';

describe('toProblem', () => {
  it('never leaks the message of an unexpected error', () => {
    const leak = new Error('relation "secret_table" does not exist at SELECT * FROM secret_table WHERE password = $1');
    const { problem, unexpected } = toProblem(leak, { url: '/v1/x?y=1', requestId: 'r1' });
    expect(problem).toMatchObject({ status: 500, code: 'internal-error', instance: '/v1/x', requestId: 'r1' });
    expect(JSON.stringify(problem)).not.toMatch(/secret_table|SELECT|password/);
    expect(unexpected).toBe(true);
  });

  it('maps a lost database connection to 503 with Retry-After', () => {
    const err = Object.assign(new Error('connect ECONNREFUSED 127.0.0.1:5432'), { code: 'ECONNREFUSED' });
    const { problem, headers, unexpected } = toProblem(new Error('wrapped', { cause: err }), {});
    expect(problem).toMatchObject({ status: 503, code: 'service-unavailable' });
    expect(headers['retry-after']).toBe('2');
    expect(unexpected).toBe(false);
  });

  it.each([
    ['57P01', 'terminating connection due to administrator command'],
    ['57P03', 'the database system is shutting down'],
  ])('maps Prisma’s wrapper of a server going down (%s: %s) to 503', (code, message) => {
    // The shape Prisma 7 throws (P2039) when the pg adapter reports a PostgreSQL error it has no kind for.
    const err = Object.assign(new Error(`Database error. Code: \`${code}\`.`), {
      code: 'P2039',
      meta: { modelName: 'Session', driverAdapterError: { name: 'DriverAdapterError', cause: { kind: 'postgres', code, message } } },
    });
    const { problem, unexpected } = toProblem(err, {});
    expect(problem).toMatchObject({ status: 503, code: 'service-unavailable' });
    expect(unexpected).toBe(false);
  });

  it.each([
    'Connection terminated due to connection timeout',
    'timeout exceeded when trying to connect',
    'Client has encountered a connection error and is not queryable',
    'Database statement timed out: no answer within 1500 ms; the connection was closed',
    'Transaction API error: Unable to start a transaction in the given time.',
  ])('maps the pool’s “%s” (a database that does not answer, or a connection lost mid-request) to 503', (message) => {
    expect(toProblem(new Error(message), {}).problem).toMatchObject({ status: 503, code: 'service-unavailable' });
  });

  it('maps the pg adapter’s lost-connection kinds to 503 and leaves its other kinds alone', () => {
    const adapterError = (kind: string) => Object.assign(new Error('DriverAdapterError'), { cause: { kind } });
    expect(toProblem(adapterError('ConnectionClosed'), {}).problem.status).toBe(503);
    expect(toProblem(adapterError('DatabaseNotReachable'), {}).problem.status).toBe(503);
    expect(toProblem(adapterError('UniqueConstraintViolation'), {}).problem.status).toBe(500);
  });

  it('maps a domain error with its fields and extensions', () => {
    const err = new DomainError('conflict', 'Asset tag VF-0001 is taken.', [{ field: 'assetTag', reason: 'already used' }], {
      existingId: 'x',
    });
    expect(toProblem(err, {}).problem).toMatchObject({
      status: 409,
      type: '/problems/conflict',
      detail: 'Asset tag VF-0001 is taken.',
      errors: [{ field: 'assetTag', reason: 'already used' }],
      existingId: 'x',
    });
  });

  it('maps an out-of-range quantity to 422 naming the field and range', () => {
    const err = new MetrologyInputError('temperatureC', 'must be between 0 and 40 °C', { min: '0', max: '40', unit: '°C' });
    expect(toProblem(err, {}).problem).toMatchObject({
      status: 422,
      code: 'unprocessable-quantity',
      errors: [{ field: 'temperatureC', reason: 'must be between 0 and 40 °C' }],
      validRange: { min: '0', max: '40', unit: '°C' },
    });
  });

  it('maps a unique violation reported by Prisma to 409', () => {
    expect(toProblem(Object.assign(new Error('Unique constraint failed'), { code: 'P2002' }), {}).problem.status).toBe(409);
  });
});
