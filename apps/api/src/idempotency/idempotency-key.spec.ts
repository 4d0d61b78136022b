import fc from 'fast-check';

import { DomainError } from '../common/problem/domain-error';
import { parseIdempotencyKey, requestFingerprint } from './idempotency-key';

const ALLOWED = /^[A-Za-z0-9._:~+/=-]{1,128}$/;

describe('parseIdempotencyKey', () => {
  it('takes a UUID as it is, and a quoted one without its quotes', () => {
    expect(parseIdempotencyKey('6f1c2d9e-8a0b-4c47-9e21-3b5d7a1f0c88')).toBe('6f1c2d9e-8a0b-4c47-9e21-3b5d7a1f0c88');
    expect(parseIdempotencyKey('"6f1c2d9e-8a0b"')).toBe('6f1c2d9e-8a0b');
    expect(parseIdempotencyKey(undefined)).toBeNull();
  });

  it('accepts exactly the allowed syntax, and refuses anything else with a problem naming the header', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 200, unit: 'binary' }), (raw) => {
        let key: string | null = null;
        try {
          key = parseIdempotencyKey(raw);
        } catch (error) {
          expect(error).toBeInstanceOf(DomainError);
          expect((error as DomainError).errors?.[0]?.field).toBe('Idempotency-Key');
          return;
        }
        expect(key).toMatch(ALLOWED);
      }),
    );
  });

  it('accepts every key of the allowed alphabet and length', () => {
    const alphabet = [...'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789._:~+/=-'];
    fc.assert(
      fc.property(fc.string({ unit: fc.constantFrom(...alphabet), minLength: 1, maxLength: 128 }), (key) => {
        expect(parseIdempotencyKey(key)).toBe(key);
      }),
    );
  });

  it('refuses the header sent twice', () => {
    expect(() => parseIdempotencyKey(['a', 'b'])).toThrow(/sent once/);
  });
});

describe('requestFingerprint', () => {
  it('is the same for the same members in another order, and differs by method, path or any value', () => {
    const base = requestFingerprint('POST', '/v1/vessels', { a: 1, b: { c: 'x', d: [1, 2] } });
    expect(requestFingerprint('post', '/v1/vessels', { b: { d: [1, 2], c: 'x' }, a: 1 }).equals(base)).toBe(true);
    expect(requestFingerprint('PUT', '/v1/vessels', { a: 1, b: { c: 'x', d: [1, 2] } }).equals(base)).toBe(false);
    expect(requestFingerprint('POST', '/v1/vessels?x=1', { a: 1, b: { c: 'x', d: [1, 2] } }).equals(base)).toBe(false);
    expect(requestFingerprint('POST', '/v1/vessels', { a: 1, b: { c: 'x', d: [2, 1] } }).equals(base)).toBe(false);
    expect(requestFingerprint('POST', '/v1/vessels', { a: '1', b: { c: 'x', d: [1, 2] } }).equals(base)).toBe(false);
  });

  it('differs by the If-Match precondition, and without one is as before', () => {
    const body = { location: 'Fume cupboard 2' };
    const v1 = requestFingerprint('PATCH', '/v1/vessels/1', body, '"v1"');
    expect(requestFingerprint('PATCH', '/v1/vessels/1', body, ' "v1" ').equals(v1)).toBe(true);
    expect(requestFingerprint('PATCH', '/v1/vessels/1', body, '"v2"').equals(v1)).toBe(false);
    expect(requestFingerprint('PATCH', '/v1/vessels/1', body).equals(v1)).toBe(false);
    expect(requestFingerprint('PATCH', '/v1/vessels/1', body, undefined).equals(requestFingerprint('PATCH', '/v1/vessels/1', body))).toBe(
      true,
    );
  });

  it('refuses a body nested deeper than any request of the API instead of recursing into it', () => {
    let deep: unknown = 1;
    for (let i = 0; i < 10_000; i++) deep = [deep];
    expect(() => requestFingerprint('POST', '/v1/vessels', deep)).toThrow(DomainError);
  });
});
