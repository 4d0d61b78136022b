import type { LookupAddress } from 'node:dns';

import { assertDeliverable, guardedLookup, isBlockedAddress, PrivateTargetError, refusedTarget } from './webhook-targets';

// Blocks from the IANA special-purpose address registries (RFC 6890, tables 1 to 17, and the RFCs each row
// names); the first and last address of a block and the neighbours just outside it are checked.
describe('isBlockedAddress', () => {
  it.each([
    ['0.0.0.0', 'this network (RFC 791)'],
    ['10.0.0.0', 'private (RFC 1918)'],
    ['10.255.255.255', 'private (RFC 1918)'],
    ['100.64.0.1', 'shared address space (RFC 6598)'],
    ['100.127.255.254', 'shared address space (RFC 6598)'],
    ['127.0.0.1', 'loopback (RFC 1122)'],
    ['127.255.255.254', 'loopback (RFC 1122)'],
    ['169.254.169.254', 'link-local (RFC 3927)'],
    ['172.16.0.1', 'private (RFC 1918)'],
    ['172.31.255.255', 'private (RFC 1918)'],
    ['192.0.0.8', 'IETF protocol assignments (RFC 6890)'],
    ['192.0.2.1', 'TEST-NET-1 (RFC 5737)'],
    ['192.168.1.1', 'private (RFC 1918)'],
    ['198.19.255.255', 'benchmarking (RFC 2544)'],
    ['198.51.100.7', 'TEST-NET-2 (RFC 5737)'],
    ['203.0.113.9', 'TEST-NET-3 (RFC 5737)'],
    ['224.0.0.1', 'multicast (RFC 5771)'],
    ['255.255.255.255', 'limited broadcast (RFC 919)'],
    ['::', 'unspecified (RFC 4291)'],
    ['::1', 'loopback (RFC 4291)'],
    ['::7f00:1', 'IPv4-compatible, deprecated (RFC 4291 2.5.5.1)'],
    ['::ffff:127.0.0.1', 'IPv4-mapped loopback (RFC 4291 2.5.5.2)'],
    ['::ffff:7f00:1', 'IPv4-mapped loopback, hexadecimal tail'],
    ['::ffff:a9fe:a9fe', 'IPv4-mapped 169.254.169.254'],
    ['64:ff9b::10.0.0.1', 'NAT64 of a private address (RFC 6052)'],
    ['100::1', 'discard-only (RFC 6666)'],
    ['2001:db8::1', 'documentation (RFC 3849)'],
    ['fc00::1', 'unique local (RFC 4193)'],
    ['fdff:ffff:ffff:ffff:ffff:ffff:ffff:ffff', 'unique local (RFC 4193)'],
    ['fe80::1', 'link-local (RFC 4291)'],
    ['fec0::1', 'site-local, deprecated (RFC 3879)'],
    ['64:ff9b:1::a9fe:a9fe', 'local-use NAT64 (RFC 8215), here of 169.254.169.254'],
    ['2002:7f00:1::1', '6to4 of 127.0.0.1 (RFC 3056)'],
    ['2001:0:4136:e378::1', 'Teredo (RFC 4380)'],
    ['::ffff:0:7f00:1', 'IPv4-translated 127.0.0.1 (RFC 2765)'],
    ['192.88.99.1', 'former 6to4 relay anycast (RFC 7526)'],
    ['ff02::1', 'multicast (RFC 4291)'],
  ])('blocks %s: %s', (address) => {
    expect(isBlockedAddress(address)).toBe(true);
  });

  it.each([
    ['9.255.255.255', 'just below 10.0.0.0/8'],
    ['11.0.0.0', 'just above 10.0.0.0/8'],
    ['100.63.255.255', 'just below 100.64.0.0/10'],
    ['100.128.0.0', 'just above 100.64.0.0/10'],
    ['172.15.255.255', 'just below 172.16.0.0/12'],
    ['172.32.0.0', 'just above 172.16.0.0/12'],
    ['192.167.255.255', 'just below 192.168.0.0/16'],
    ['198.20.0.0', 'just above 198.18.0.0/15'],
    ['223.255.255.255', 'just below 224.0.0.0/4'],
    ['1.1.1.1', 'a public resolver'],
    ['::ffff:1.1.1.1', 'IPv4-mapped public address'],
    ['64:ff9b::1.1.1.1', 'NAT64 of a public address'],
    ['2606:4700:4700::1111', 'a public IPv6 resolver'],
    ['fbff:ffff::1', 'just below fc00::/7'],
    ['fe00::1', 'between unique local and link-local'],
    ['2001:200::1', 'just above 2001::/23'],
  ])('lets %s through: %s', (address) => {
    expect(isBlockedAddress(address)).toBe(false);
  });

  it('refuses what is not an address', () => {
    expect(isBlockedAddress('localhost')).toBe(true);
    expect(isBlockedAddress('')).toBe(true);
  });
});

describe('refusedTarget', () => {
  it.each([
    'http://127.0.0.1:8080/hooks',
    'http://0x7f.1/', // the WHATWG URL parser reads 127.0.0.1
    'http://2130706433/', // likewise
    'http://[::1]/',
    'http://[::ffff:169.254.169.254]/',
    'http://localhost/',
    'http://LOCALHOST./',
    'http://bridge.localhost:3000/',
  ])('refuses %s', (url) => {
    expect(refusedTarget(url)).toMatch(/^must not point at/);
  });

  it('takes public addresses and names (a name is checked when a delivery resolves it)', () => {
    expect(refusedTarget('https://1.1.1.1/hooks')).toBeNull();
    expect(refusedTarget('https://hooks.waterworks.example/registry')).toBeNull();
    expect(refusedTarget('https://localhost.waterworks.example/')).toBeNull();
  });
});

describe('assertDeliverable', () => {
  it('refuses a literal blocked address before connecting, and passes names and public addresses', () => {
    expect(() => assertDeliverable('http://10.0.0.5/x')).toThrow(PrivateTargetError);
    expect(() => assertDeliverable('http://1.1.1.1/x')).not.toThrow();
    expect(() => assertDeliverable('http://hooks.waterworks.example/x')).not.toThrow();
  });
});

describe('guardedLookup', () => {
  const look = (hostname: string, all: boolean) =>
    new Promise<{ error: NodeJS.ErrnoException | null; result: string | LookupAddress[] }>((resolve) => {
      guardedLookup(hostname, { all }, (error: NodeJS.ErrnoException | null, result: string | LookupAddress[]) =>
        resolve({ error, result }),
      );
    });

  it('refuses a name resolving to loopback (localhost, from the hosts file)', async () => {
    const { error } = await look('localhost', false);
    expect(error).toBeInstanceOf(PrivateTargetError);
    expect(error?.message).toMatch(/^localhost resolves to (127\.0\.0\.1|::1)/);
  });

  it('answers a public address in the shape asked for (one, or all)', async () => {
    expect(await look('1.1.1.1', false)).toEqual({ error: null, result: '1.1.1.1' });
    expect(await look('1.1.1.1', true)).toEqual({ error: null, result: [{ address: '1.1.1.1', family: 4 }] });
  });
});
