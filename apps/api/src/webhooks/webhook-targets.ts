import { lookup as dnsLookup, type LookupAddress } from 'node:dns';
import { BlockList, isIP, type LookupFunction } from 'node:net';

/**
 * Where a webhook may not deliver unless the deployment allows private targets
 * (WEBHOOK_PRIVATE_TARGETS=allow): this host, the lab network and the cloud's
 * metadata service are not for a lab manager to reach through the registry.
 * The blocks are those of the IANA special-purpose registries (RFC 6890 and
 * its updates) that are not globally reachable, plus the deprecated and
 * tunnelling forms that can carry an internal IPv4 address: unspecified,
 * loopback, private, shared (carrier NAT), link-local, benchmarking,
 * documentation, multicast, reserved, IPv4-compatible, IPv4-translated,
 * local-use NAT64, 6to4, Teredo and site-local.
 */
const BLOCKED = new BlockList();
const IPV4_BLOCKS: readonly (readonly [string, number])[] = [
  ['0.0.0.0', 8], // "this network" (RFC 791)
  ['10.0.0.0', 8], // private (RFC 1918)
  ['100.64.0.0', 10], // shared address space (RFC 6598)
  ['127.0.0.0', 8], // loopback (RFC 1122)
  ['169.254.0.0', 16], // link-local (RFC 3927), where cloud metadata services answer
  ['172.16.0.0', 12], // private (RFC 1918)
  ['192.0.0.0', 24], // IETF protocol assignments (RFC 6890)
  ['192.0.2.0', 24], // documentation TEST-NET-1 (RFC 5737)
  ['192.88.99.0', 24], // former 6to4 relay anycast (RFC 7526)
  ['192.168.0.0', 16], // private (RFC 1918)
  ['198.18.0.0', 15], // benchmarking (RFC 2544)
  ['198.51.100.0', 24], // documentation TEST-NET-2 (RFC 5737)
  ['203.0.113.0', 24], // documentation TEST-NET-3 (RFC 5737)
  ['224.0.0.0', 4], // multicast (RFC 5771)
  ['240.0.0.0', 4], // reserved, and the limited broadcast 255.255.255.255 (RFC 1112, RFC 919)
];
const IPV6_BLOCKS: readonly (readonly [string, number])[] = [
  ['::', 128], // unspecified (RFC 4291)
  ['::1', 128], // loopback (RFC 4291)
  ['::', 96], // the deprecated IPv4-compatible form (RFC 4291, 2.5.5.1), ::7f00:1 among them
  ['::ffff:0:0:0', 96], // IPv4-translated (RFC 2765)
  ['64:ff9b:1::', 48], // local-use IPv4/IPv6 translation, for private networks (RFC 8215)
  ['100::', 64], // discard-only (RFC 6666)
  ['2001::', 23], // IETF protocol assignments, Teredo among them (RFC 2928, RFC 4380)
  ['2001:db8::', 32], // documentation (RFC 3849)
  ['2002::', 16], // 6to4, which carries any IPv4 address (RFC 3056, deprecated by RFC 7526)
  ['fc00::', 7], // unique local (RFC 4193)
  ['fe80::', 10], // link-local (RFC 4291)
  ['fec0::', 10], // site-local, deprecated (RFC 3879)
  ['ff00::', 8], // multicast (RFC 4291)
];
for (const [net, prefix] of IPV4_BLOCKS) BLOCKED.addSubnet(net, prefix, 'ipv4');
for (const [net, prefix] of IPV6_BLOCKS) BLOCKED.addSubnet(net, prefix, 'ipv6');

/** IPv6 forms that carry an IPv4 address in their last 32 bits: IPv4-mapped (RFC 4291) and NAT64 (RFC 6052). */
const EMBEDS_IPV4 = /^(?:::ffff|64:ff9b:):([0-9a-f]{1,4}):([0-9a-f]{1,4})$/;

/** The IPv4 address an IPv4-mapped or NAT64 IPv6 address stands for, else null. */
function embeddedIpv4(ipv6: string): string | null {
  // The WHATWG URL parser writes an IPv6 address in its one canonical form (RFC 5952), hex tails included.
  const canonical = new URL(`http://[${ipv6}]/`).hostname.slice(1, -1);
  const match = EMBEDS_IPV4.exec(canonical);
  if (!match) return null;
  const high = Number.parseInt(match[1] ?? '', 16);
  const low = Number.parseInt(match[2] ?? '', 16);
  return [high >> 8, high & 0xff, low >> 8, low & 0xff].join('.');
}

/** True for an address in a blocked block (an IPv6 address carrying an IPv4 one is judged by that one); anything not an address is refused. */
export function isBlockedAddress(address: string): boolean {
  const family = isIP(address);
  if (family === 4) return BLOCKED.check(address, 'ipv4');
  if (family !== 6) return true;
  const ipv4 = embeddedIpv4(address);
  return ipv4 === null ? BLOCKED.check(address, 'ipv6') : BLOCKED.check(ipv4, 'ipv4');
}

/** The host of a URL as an address or a name: IPv6 literals without their brackets, names without a trailing dot, lower case. */
function hostOf(url: string): string {
  const host = new URL(url).hostname;
  return host.startsWith('[') ? host.slice(1, -1) : host.replace(/\.$/, '').toLowerCase();
}

/**
 * Why a webhook URL may not be registered, or null. An address is judged now; a name only
 * when a delivery resolves it (names change), except localhost and its subdomains, which
 * always mean this host (RFC 6761, 6.3).
 */
export function refusedTarget(url: string): string | null {
  const host = hostOf(url);
  if (isIP(host) !== 0) {
    return isBlockedAddress(host) ? 'must not point at a loopback, private, link-local or reserved address' : null;
  }
  if (host === 'localhost' || host.endsWith('.localhost')) return 'must not point at this host (localhost)';
  return null;
}

/** The error a guarded lookup gives; a delivery reports its message. */
export class PrivateTargetError extends Error {
  override readonly name = 'PrivateTargetError';
  readonly code = 'EPRIVATETARGET';
}

/**
 * A DNS lookup for outgoing connections that refuses a name resolving to a blocked address,
 * so the check holds for the address actually connected to (a name re-pointed between
 * registration and delivery included).
 */
export const guardedLookup: LookupFunction = (hostname, options, callback) => {
  dnsLookup(hostname, { ...options, all: true }, (error, addresses: LookupAddress[]) => {
    if (error) {
      callback(error, '', 0);
      return;
    }
    const blocked = addresses.find((a) => isBlockedAddress(a.address));
    if (blocked) {
      callback(new PrivateTargetError(`${hostname} resolves to ${blocked.address}, a loopback, private or reserved address`), '', 0);
      return;
    }
    const [first] = addresses;
    if (options.all) (callback as unknown as (e: null, all: LookupAddress[]) => void)(null, addresses);
    else if (first) callback(null, first.address, first.family);
    else callback(new PrivateTargetError(`${hostname} has no address`), '', 0);
  });
};

/** Refuses a URL whose host is a blocked address before any connection (a literal address is never looked up). */
export function assertDeliverable(url: string): void {
  const host = hostOf(url);
  if (isIP(host) !== 0 && isBlockedAddress(host)) {
    throw new PrivateTargetError(`${host} is a loopback, private or reserved address`);
  }
}
