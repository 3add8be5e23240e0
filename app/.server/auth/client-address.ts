import { AsyncLocalStorage } from "node:async_hooks";
import http from "node:http";
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
      return peer.run({ address: req.socket?.remoteAddress }, () => emit.call(this, event, ...args));
    }
    return emit.call(this, event, ...args);
  };
}

trackPeerAddresses();

export function peerAddress(): string | undefined {
  return peer.getStore()?.address;
}

function normalise(address: string): string {
  const a = address.trim().replace(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/, "$1");
  return a.slice(0, 64) || "unknown";
}

// With one trusted proxy in front, the entry it appended (the last one) is the client; the rest can be forged.
export function pickClientAddress(input: { forwardedFor: string | null; peer: string | undefined; trustProxy: boolean }): string {
  if (input.trustProxy && input.forwardedFor) {
    const last = input.forwardedFor.split(",").map((s) => s.trim()).filter(Boolean).at(-1);
    if (last) return normalise(last);
  }
  return normalise(input.peer ?? "unknown");
}

export function clientAddress(request: Request): string {
  return pickClientAddress({
    forwardedFor: request.headers.get("x-forwarded-for"),
    peer: peerAddress(),
    trustProxy: env().TRUST_PROXY === "1",
  });
}
