import { AsyncLocalStorage } from "node:async_hooks";
import http from "node:http";
import { BlockList, isIP } from "node:net";
import { env } from "../env";

const peer = new AsyncLocalStorage<{ address: string | undefined }>();
const installed = Symbol.for("bandledger.peer-address");

// react-router-serve hands loaders a Fetch Request without its socket; keep the peer address for each HTTP request.
export function trackPeerAddresses(): void {
  const proto = http.Server.prototype as unknown as Record<symbol, boolean> & { emit: (event: string | symbol, ...args: unknown[]) => boolean };
  if (proto[installed]) return;
  proto[installed] = true;
  const emit = proto.emit;
  proto.emit = function (this: http.Server, event: string | symbol, ...args: unknown[]) {
    if (event === "request") {
      const req = args[0] as http.IncomingMessage;
      return runWithPeerAddress(req.socket?.remoteAddress, () => emit.call(this, event, ...args));
    }
    return emit.call(this, event, ...args);
  };
}

trackPeerAddresses();

/** Runs `fn` as if serving a request whose socket peer is `address` (the HTTP server does this for every request). */
export function runWithPeerAddress<T>(address: string | undefined, fn: () => T): T {
  return peer.run({ address }, fn);
}

export function peerAddress(): string | undefined {
  return peer.getStore()?.address;
}

function normalise(address: string): string {
  const a = address.trim().replace(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/, "$1");
  return a.slice(0, 64) || "unknown";
}

// The proxies in front of the app, as TRUST_PROXY lists them (addresses or CIDR ranges, IPv4 or IPv6).
export function trustedProxies(list: string): BlockList {
  const block = new BlockList();
  for (const item of list.split(",").map((s) => s.trim()).filter(Boolean)) {
    const [address, prefix] = item.split("/");
    const type = isIP(address) === 6 ? "ipv6" : "ipv4";
    if (prefix === undefined) block.addAddress(address, type);
    else block.addSubnet(address, Number(prefix), type);
  }
  return block;
}

function isTrusted(proxies: BlockList | null, address: string | undefined): boolean {
  if (!proxies || !address) return false;
  const a = normalise(address);
  const type = isIP(a);
  return type !== 0 && proxies.check(a, type === 6 ? "ipv6" : "ipv4");
}

// X-Forwarded-For counts only when the socket's peer is a listed proxy. Each proxy appends the address it saw, so
// walking from the end the first entry that is not itself a listed proxy is the client; what came before can be forged.
export function pickClientAddress(input: { forwardedFor: string | null; peer: string | undefined; proxies: BlockList | null }): string {
  if (input.forwardedFor && isTrusted(input.proxies, input.peer)) {
    const hops = input.forwardedFor.split(",").map((s) => s.trim()).filter(Boolean);
    for (let i = hops.length - 1; i >= 0; i--) {
      if (!isTrusted(input.proxies, hops[i]) || i === 0) return normalise(hops[i]);
    }
  }
  return normalise(input.peer ?? "unknown");
}

let proxies: { list: string; block: BlockList | null } | undefined;

export function clientAddress(request: Request): string {
  const list = env().TRUST_PROXY;
  if (proxies?.list !== list) proxies = { list, block: list ? trustedProxies(list) : null };
  return pickClientAddress({ forwardedFor: request.headers.get("x-forwarded-for"), peer: peerAddress(), proxies: proxies.block });
}
