/**
 * The rule of "A second person signs off" (contract/sign-off.ts), every
 * combination of starter, approver and sealer among two people, and the
 * words the publish panel and the activity trail use.
 */
import { describe, expect, it } from "vitest";
import {
  isSinglePersonSignOff,
  mayApprove,
  maySeal,
  signOffSettingWords,
  whoMayApprove,
  whoMaySeal,
} from "../../../contract/sign-off";

const tomas = { id: "u-tomas", name: "Tomas Ferreira" };
const maren = { id: "u-maren", name: "Maren Lindqvist" };

describe("the rule", () => {
  it("approval: the starter may not approve while the setting is on; anyone may while it is off", () => {
    expect(mayApprove(true, tomas.id, tomas.id)).toBe(false);
    expect(mayApprove(true, tomas.id, maren.id)).toBe(true);
    expect(mayApprove(false, tomas.id, tomas.id)).toBe(true);
    expect(mayApprove(false, tomas.id, maren.id)).toBe(true);
  });

  it("seal: refused only when one person started, approved and sealed while the setting is on", () => {
    // All 2 × 2 × 2 assignments of starter, approver and sealer (exact enumeration).
    for (const starter of [tomas, maren]) {
      for (const approver of [tomas, maren]) {
        for (const sealer of [tomas, maren]) {
          const one = starter === approver && approver === sealer;
          expect(isSinglePersonSignOff(starter.id, approver.id, sealer.id)).toBe(one);
          expect(maySeal(true, starter.id, approver.id, sealer.id)).toBe(!one);
          expect(maySeal(false, starter.id, approver.id, sealer.id)).toBe(true);
        }
      }
    }
  });
});

describe("words", () => {
  it("who may approve next names the starter while the setting is on, or 'you' to the starter", () => {
    expect(whoMayApprove(true, tomas, maren.id)).toBe(
      "a Reviewer or Owner other than Tomas Ferreira",
    );
    expect(whoMayApprove(true, tomas, tomas.id)).toBe("a Reviewer or Owner other than you");
    expect(whoMayApprove(true, { id: "u-x", name: null }, null)).toBe(
      "a Reviewer or Owner other than the person who started it",
    );
    expect(whoMayApprove(false, tomas, tomas.id)).toBe("a Reviewer or Owner");
  });

  it("who may seal next names the starter only when they also approved and the setting is on", () => {
    expect(whoMaySeal(true, tomas, maren, null)).toBe("an Owner");
    expect(whoMaySeal(true, tomas, tomas, maren.id)).toBe("an Owner other than Tomas Ferreira");
    expect(whoMaySeal(true, tomas, tomas, tomas.id)).toBe("an Owner other than you");
    expect(whoMaySeal(false, tomas, tomas, tomas.id)).toBe("an Owner");
  });

  it("the activity trail says who turned the setting on or off", () => {
    expect(signOffSettingWords(false)).toBe("turned off “A second person signs off”");
    expect(signOffSettingWords(true)).toBe("turned on “A second person signs off”");
  });
});
