import http from "node:http";
import type { AddressInfo } from "node:net";
import { describe, expect, it } from "vitest";
import { peerAddress, pickClientAddress, trustedProxies } from "./client-address";

describe("pickClientAddress", () => {
  const proxies = trustedProxies("10.0.0.1, 192.0.2.0/24, ::1");

  it("uses the socket address and ignores X-Forwarded-For when no proxy is trusted", () => {
    expect(pickClientAddress({ forwardedFor: "198.51.100.1", peer: "127.0.0.1", proxies: null })).toBe("127.0.0.1");
  });

  it("ignores X-Forwarded-For from a peer that is not a listed proxy, whatever it claims", () => {
    expect(pickClientAddress({ forwardedFor: "198.51.100.1", peer: "203.0.113.50", proxies })).toBe("203.0.113.50");
    expect(pickClientAddress({ forwardedFor: "10.0.0.1", peer: "::ffff:203.0.113.50", proxies })).toBe("203.0.113.50");
  });

  it("takes the entry the trusted proxy appended (the last), not what the client wrote before it", () => {
    expect(pickClientAddress({ forwardedFor: "6.6.6.6, 203.0.113.9", peer: "10.0.0.1", proxies })).toBe("203.0.113.9");
  });

  it("skips listed proxies from the end of the chain (by address and by range) and stops at the first other entry", () => {
    expect(pickClientAddress({ forwardedFor: "6.6.6.6, 203.0.113.9, 192.0.2.77", peer: "10.0.0.1", proxies })).toBe("203.0.113.9");
    expect(pickClientAddress({ forwardedFor: "203.0.113.9", peer: "::1", proxies })).toBe("203.0.113.9");
  });

  it("falls back to the socket when the proxy sent no header, and writes IPv4-mapped IPv6 as IPv4", () => {
    expect(pickClientAddress({ forwardedFor: null, peer: "::ffff:10.0.0.1", proxies })).toBe("10.0.0.1");
    expect(pickClientAddress({ forwardedFor: null, peer: undefined, proxies: null })).toBe("unknown");
  });
});

describe("peerAddress", () => {
  it("is the socket address of the HTTP request being served, across awaits", async () => {
    const server = http.createServer(async (_req, res) => {
      await new Promise((r) => setTimeout(r, 5));
      res.end(String(peerAddress()));
    });
    await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
    try {
      const port = (server.address() as AddressInfo).port;
      const body = await (await fetch(`http://127.0.0.1:${port}/`)).text();
      expect(body).toMatch(/^(::ffff:)?127\.0\.0\.1$/);
      expect(peerAddress()).toBeUndefined();
    } finally {
      await new Promise((r) => server.close(r));
    }
  });
});
