import { describe, expect, it } from "vitest";
import { isSameOriginRequest, type OriginHeaders } from "@/lib/auth/same-origin";

const base: OriginHeaders = { method: "POST", host: "pool.example.org", origin: null, secFetchSite: null, authorization: null };

describe("cross-site request check (Fetch Metadata, W3C; Origin header, RFC 6454)", () => {
  it("lets safe methods through", () => {
    expect(isSameOriginRequest({ ...base, method: "GET", secFetchSite: "cross-site" })).toBe(true);
  });
  it("accepts same-origin fetch metadata and refuses cross-site or same-site", () => {
    expect(isSameOriginRequest({ ...base, secFetchSite: "same-origin" })).toBe(true);
    expect(isSameOriginRequest({ ...base, secFetchSite: "cross-site" })).toBe(false);
    expect(isSameOriginRequest({ ...base, secFetchSite: "same-site" })).toBe(false);
  });
  it("falls back to comparing Origin with Host", () => {
    expect(isSameOriginRequest({ ...base, origin: "https://pool.example.org" })).toBe(true);
    expect(isSameOriginRequest({ ...base, origin: "https://evil.example.com" })).toBe(false);
    expect(isSameOriginRequest({ ...base, origin: "null" })).toBe(false);
  });
  it("accepts bearer-token clients, which browsers do not send on their own", () => {
    expect(isSameOriginRequest({ ...base, secFetchSite: "cross-site", authorization: "Bearer ppt_abc" })).toBe(true);
  });
});
