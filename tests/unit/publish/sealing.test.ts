/**
 * Canonical JSON (RFC 8785) and the seal hash.
 */
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { canonicalJson, sealHash } from "../../../server/services/sealing";

describe("canonical JSON", () => {
  it("serialises the RFC 8785 example: sorted keys, shortest numbers, JSON string escapes", () => {
    const value = JSON.parse(
      '{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], "string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", "literals": [null, true, false]}',
    );
    // (RFC 8785 §3.2.2, example output; value from memory)
    expect(canonicalJson(value)).toBe(
      '{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}',
    );
  });

  it("sorts keys by UTF-16 code units (a surrogate pair before U+FB33)", () => {
    const value = {
      "\u20ac": 1,
      "\r": 2,
      "\ufb33": 3,
      "1": 4,
      "\ud83d\ude00": 5,
      "\u0080": 6,
      "\u00f6": 7,
    };
    // (RFC 8785 §3.2.3 sorting example, value from memory; also exact: compare the code units 000D < 0031 < 0080 < 00F6 < 20AC < D83D < FB33)
    expect(canonicalJson(value)).toBe(
      '{"\\r":2,"1":4,"\u0080":6,"\u00f6":7,"\u20ac":1,"\ud83d\ude00":5,"\ufb33":3}',
    );
  });

  it("is independent of key order and nesting order of insertion, keeps array order, drops undefined members", () => {
    const a = { b: [3, { y: 1, x: 2 }], a: "x", u: undefined };
    const b = { a: "x", b: [3, { x: 2, y: 1 }] };
    expect(canonicalJson(a)).toBe('{"a":"x","b":[3,{"x":2,"y":1}]}'); // (exact: written out by hand)
    expect(canonicalJson(a)).toBe(canonicalJson(b));
    expect(canonicalJson([2, 1])).not.toBe(canonicalJson([1, 2]));
  });

  it("refuses values JSON cannot hold", () => {
    expect(() => canonicalJson({ x: Number.NaN })).toThrow(TypeError);
    expect(() => canonicalJson({ x: Number.POSITIVE_INFINITY })).toThrow("not a JSON number");
    expect(() => canonicalJson(undefined)).toThrow("not a JSON value");
    expect(() => canonicalJson(() => 1)).toThrow("not a JSON value");
  });
});

describe("seal hash", () => {
  it("is the SHA-256 of the canonical JSON of { recipe, result }", () => {
    const recipe = { seed: 7, kind: "one-sample" };
    const result = { regions: [{ region: "L_insula", p: 0.0123, n: 70 }], notes: [] };
    const text =
      '{"recipe":{"kind":"one-sample","seed":7},"result":{"notes":[],"regions":[{"n":70,"p":0.0123,"region":"L_insula"}]}}'; // (exact: written out by hand)
    expect(sealHash(recipe, result)).toBe(createHash("sha256").update(text, "utf8").digest("hex"));
    expect(sealHash(recipe, result)).toMatch(/^[0-9a-f]{64}$/);
  });

  it("changes with any number of the result and not with key order", () => {
    const recipe = { seed: 7 };
    const base = sealHash(recipe, { regions: [{ p: 0.0123 }] });
    expect(sealHash(recipe, { regions: [{ p: 0.0124 }] })).not.toBe(base);
    expect(sealHash({ seed: 8 }, { regions: [{ p: 0.0123 }] })).not.toBe(base);
    expect(sealHash(JSON.parse('{"seed":7}'), JSON.parse('{"regions":[{"p":0.0123}]}'))).toBe(base);
  });

  it("hashes a known input to the FIPS 180-2 value through the same digest (sanity of the digest, not of the canonical form)", () => {
    // SHA-256("abc") (FIPS 180-2, Appendix B.1)
    expect(createHash("sha256").update("abc").digest("hex")).toBe(
      "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
    );
  });
});
