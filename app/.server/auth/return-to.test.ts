import { describe, expect, it } from "vitest";
import { pageAddress, safeReturnTo } from "./return-to";

describe("safeReturnTo", () => {
  it("keeps a path of this site with its query and fragment", () => {
    expect(safeReturnTo("/registry/gaas?t=300#gap")).toBe("/registry/gaas?t=300#gap");
    expect(safeReturnTo("/account")).toBe("/account");
  });

  it.each([
    ["https://evil.example/", "an absolute URL"],
    ["//evil.example/x", "a protocol-relative URL"],
    ["/\\evil.example", "a backslash that browsers read as //"],
    ["javascript:alert(1)", "a script URL"],
    ["/ok\nLocation: x", "a control character"],
    ["", "an empty value"],
    ["/sign-in?returnTo=/x", "the sign-in page itself"],
    ["/sign-in/code", "the code page"],
    ["/auth/magic-link?t=x", "the magic link"],
    ["/sign-out", "sign-out"],
  ])("refuses %s (%s)", (value) => {
    expect(safeReturnTo(value)).toBe("/");
  });

  it("refuses values that are not strings", () => {
    expect(safeReturnTo(null)).toBe("/");
    expect(safeReturnTo(undefined, "/registry")).toBe("/registry");
  });
});

describe("pageAddress", () => {
  it("removes React Router's data-request details", () => {
    expect(pageAddress("http://x.test/account.data?_routes=routes%2Faccount")).toBe("/account");
    expect(pageAddress("http://x.test/admin/_.data")).toBe("/admin/");
    expect(pageAddress("http://x.test/admin/users?index&q=1")).toBe("/admin/users?q=1");
    expect(pageAddress("http://x.test/registry?family=arsenides")).toBe("/registry?family=arsenides");
  });
});
