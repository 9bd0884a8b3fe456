// Which API addresses the server may call with a stored host token (docs/server.md, "Git hosts"):
// a lead types the address, so without this the server would send its token and requests to any
// machine it can reach (server-side request forgery). https only; the host name is resolved and
// every address it gives must be public, unless PLEAT_HOST_ALLOW names the host or its range.
// http is for the loopback only, and only under PLEAT_HOST_HTTP_LOOPBACK=1 (a local fake host).
import { lookup } from 'node:dns/promises';
import { BlockList, isIP } from 'node:net';

export interface HostAddressPolicy {
  /** PLEAT_HOST_HTTP_LOOPBACK=1: http:// (and https://) to 127.0.0.0/8 and ::1. */
  httpLoopback: boolean;
  /** PLEAT_HOST_ALLOW: host names, addresses or CIDR ranges that may be private. */
  allow: string[];
}

export type Resolve = (host: string) => Promise<string[]>;

const systemResolve: Resolve = async (host) => (await lookup(host, { all: true, verbatim: true })).map((a) => a.address);

/** Not public: loopback, private, shared (CGNAT), link-local (cloud metadata at 169.254.169.254), multicast, reserved. */
const NOT_PUBLIC = new BlockList();
for (const [net, bits] of [
  ['0.0.0.0', 8], ['10.0.0.0', 8], ['100.64.0.0', 10], ['127.0.0.0', 8], ['169.254.0.0', 16], ['172.16.0.0', 12],
  ['192.0.0.0', 24], ['192.168.0.0', 16], ['198.18.0.0', 15], ['224.0.0.0', 4], ['240.0.0.0', 4],
] as const) NOT_PUBLIC.addSubnet(net, bits, 'ipv4');
for (const [net, bits] of [['::', 128], ['::1', 128], ['fc00::', 7], ['fe80::', 10], ['ff00::', 8], ['64:ff9b::', 96]] as const) NOT_PUBLIC.addSubnet(net, bits, 'ipv6');

const LOOPBACK = new BlockList();
LOOPBACK.addSubnet('127.0.0.0', 8, 'ipv4');
LOOPBACK.addAddress('::1', 'ipv6');

/** An IPv4 address written as IPv6 (::ffff:10.0.0.1) is judged as the IPv4 address. */
function plain(address: string): { address: string; family: 'ipv4' | 'ipv6' } {
  const m = /^::ffff:(\d+\.\d+\.\d+\.\d+)$/i.exec(address);
  if (m) return { address: m[1]!, family: 'ipv4' };
  return { address, family: isIP(address) === 6 ? 'ipv6' : 'ipv4' };
}

function inList(list: BlockList, address: string): boolean {
  const a = plain(address);
  return list.check(a.address, a.family);
}

/** The allow-list as a BlockList of ranges and a set of host names. */
function allowList(entries: string[]): { names: Set<string>; ranges: BlockList } {
  const names = new Set<string>();
  const ranges = new BlockList();
  for (const raw of entries) {
    const e = raw.trim().toLowerCase();
    if (!e) continue;
    const [net, bits] = e.split('/');
    const family = isIP(net!);
    if (family && bits !== undefined) ranges.addSubnet(net!, Number(bits), family === 6 ? 'ipv6' : 'ipv4');
    else if (family) ranges.addAddress(net!, family === 6 ? 'ipv6' : 'ipv4');
    else names.add(e);
  }
  return { names, ranges };
}

/**
 * Why the server may not reach `host` at `addresses` over `protocol` ('http:' or 'https:'), or
 * null when it may: the one judgement of an address, made on saving, before every call and again
 * at the connection itself (hostLookup).
 */
function refuseAddresses(host: string, protocol: string, addresses: string[], policy: HostAddressPolicy, shown = host): string | null {
  const loopbackOnly = addresses.every((a) => inList(LOOPBACK, a));
  if (protocol === 'http:') {
    if (!(policy.httpLoopback && loopbackOnly)) return `The API address must be https:// (got ${protocol}//${shown}); the token is never sent unencrypted.`;
    return null;
  }
  if (protocol !== 'https:') return `The API address must be https:// (got ${protocol}//).`;
  const allow = allowList(policy.allow);
  if (allow.names.has(host)) return null;
  for (const a of addresses) {
    if (!inList(NOT_PUBLIC, a)) continue;
    if (policy.httpLoopback && inList(LOOPBACK, a)) continue;
    if (inList(allow.ranges, a)) continue;
    return `The API host ${host} is at ${a}, a private, loopback, link-local or reserved address; the server calls only public hosts unless an administrator allows this one in PLEAT_HOST_ALLOW (docs/server.md, Git hosts).`;
  }
  return null;
}

/**
 * Why the server may not call `url` with a token, or null when it may. `unresolved` says what to
 * do with a host name that does not resolve now: 'accept' on saving (the host may be down; the
 * check runs again before every call), 'refuse' before a call.
 */
export async function refuseHostAddress(url: string, policy: HostAddressPolicy, unresolved: 'accept' | 'refuse', resolve: Resolve = systemResolve): Promise<string | null> {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    return `The API address "${url}" is not a URL.`;
  }
  if (u.username || u.password) return 'The API address may not carry a user name or password; the token is entered on its own.';
  const host = u.hostname.replace(/^\[|\]$/g, '').toLowerCase();
  let addresses: string[];
  if (isIP(host)) addresses = [host];
  else {
    try {
      addresses = await resolve(host);
    } catch {
      addresses = [];
    }
    if (addresses.length === 0) return unresolved === 'accept' ? null : `The API host ${host} does not resolve to an address.`;
  }
  return refuseAddresses(host, u.protocol, addresses, policy, u.host);
}

/** The `lookup` of net.connect: with `all`, every address; without, the first. */
export type ConnectLookup = (
  hostname: string,
  options: { all?: boolean; family?: number | string },
  callback: (err: NodeJS.ErrnoException | null, address: string | { address: string; family: number }[], family?: number) => void,
) => void;

/**
 * The name resolution of the host calls' connections: the addresses the socket will connect to are
 * the ones judged, in the same step, so a DNS answer that changes after the check before the call
 * (rebinding) is refused at the connection instead of being called with the token. `protocol` is
 * the API address's.
 */
export function hostLookup(protocol: string, policy: HostAddressPolicy, resolve: Resolve = systemResolve): ConnectLookup {
  return (hostname, options, callback) => {
    const host = hostname.replace(/^\[|\]$/g, '').toLowerCase();
    resolve(host).then((addresses) => {
      if (addresses.length === 0) throw Object.assign(new Error(`The API host ${host} does not resolve to an address.`), { code: 'ENOTFOUND' });
      const refused = refuseAddresses(host, protocol, addresses, policy);
      if (refused) throw Object.assign(new Error(refused), { code: 'EHOSTREFUSED' });
      const found = addresses.map((address) => ({ address, family: isIP(address) === 6 ? 6 : 4 }));
      if (options.all) callback(null, found);
      else callback(null, found[0]!.address, found[0]!.family);
    }).catch((err: NodeJS.ErrnoException) => callback(err, ''));
  };
}
