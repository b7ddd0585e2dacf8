/** The figure tests' XML check accepts well-formed text and refuses each kind of fault (XML 1.0, W3C 2008, §2.1, §3). */
import { describe, expect, it } from "vitest";
import { parseXml } from "./xml-check";

describe("parseXml", () => {
  it("reads elements, attributes and decoded text", () => {
    const els = parseXml('<svg a="1"><title>A &amp; B &#x2212;1</title><g id="x"/></svg>');
    expect(els.map((e) => e.name)).toEqual(["svg", "title", "g"]);
    expect(els[1].text).toBe("A & B \u22121");
    expect(els[2].attrs.id).toBe("x");
  });
  it.each([
    ["<a><b></a></b>", "does not close"],
    ['<a x="1" x="2"/>', "repeated"],
    ["<a x=1/>", "not quoted"],
    ["<a>1 < 2</a>", "bad tag name"],
    ["<a>R&D</a>", "bad entity"],
    ["<a/><b/>", "second root"],
    ["<a>", "never closed"],
  ])("refuses %s", (text, message) => {
    expect(() => parseXml(text)).toThrow(message);
  });
});
