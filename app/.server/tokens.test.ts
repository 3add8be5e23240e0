import { describe, expect, it } from "vitest";
import { generateToken, hashToken } from "./tokens";

describe("personal API tokens", () => {
  it("are hashed with SHA-256 (FIPS 180-2 test vector for \"abc\")", () => {
    expect(hashToken("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });

  it("carry the blt_ prefix and 32 random bytes in base64url, and store only the hash and a short prefix", () => {
    const seen = new Set<string>();
    for (let i = 0; i < 500; i++) {
      const t = generateToken();
      expect(t.token).toMatch(/^blt_[A-Za-z0-9_-]{43}$/);
      expect(Buffer.from(t.token.slice(4), "base64url")).toHaveLength(32);
      expect(t.hash).toBe(hashToken(t.token));
      expect(t.prefix).toBe(t.token.slice(0, 12));
      seen.add(t.token);
    }
    expect(seen.size).toBe(500);
  });
});
