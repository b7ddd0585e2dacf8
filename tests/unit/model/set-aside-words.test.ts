/**
 * Set-asides in plain words: the activity sentences (who did what to whom,
 * with the reason quoted), the facts read from audit events (including
 * restore events recorded before they named the participant in `after`),
 * and the card's "Set aside on … by …" lines.
 */
import { describe, expect, it } from "vitest";
import {
  restoredLine,
  scopeLabel,
  setAsideEventFacts,
  setAsideEventSentence,
  setAsideEventWords,
  setAsideLine,
} from "../../../contract/set-aside-words";

describe("activity sentences", () => {
  it("say who set whom aside from which region, and why", () => {
    expect(
      setAsideEventSentence("Maren Lindqvist", {
        action: "set aside",
        participant: "sub-41",
        region: "L_dlpfc",
        reason: "motion spikes",
      }),
    ).toBe("Maren Lindqvist set aside sub-41 from L_dlpfc: ‘motion spikes’");
    expect(
      setAsideEventSentence("Maren Lindqvist", {
        action: "restored",
        participant: "sub-41",
        region: "L_dlpfc",
        reason: "motion rechecked",
      }),
    ).toBe("Maren Lindqvist restored sub-41 to L_dlpfc: ‘motion rechecked’");
  });

  it("say every region when the set-aside has no region", () => {
    expect(
      setAsideEventWords({
        action: "set aside",
        participant: "sub-07",
        region: null,
        reason: "asleep",
      }),
    ).toBe("set aside sub-07 from every region: ‘asleep’");
    expect(
      setAsideEventWords({
        action: "restored",
        participant: "sub-07",
        region: null,
        reason: "awake after all",
      }),
    ).toBe("restored sub-07 to every region: ‘awake after all’");
  });

  it("name no one when the participant is withheld, and leave out a reason never recorded", () => {
    expect(
      setAsideEventWords({ action: "restored", participant: null, region: "dACC", reason: null }),
    ).toBe("restored a participant to dACC");
  });
});

describe("facts of audit events", () => {
  it("read a set-aside event's participant, region and reason", () => {
    expect(
      setAsideEventFacts({
        kind: "participant.set_aside",
        targetId: "sub-41",
        before: null,
        after: {
          setAsideId: "x",
          participant: "sub-41",
          region: "L_dlpfc",
          reason: "motion spikes",
        },
      }),
    ).toEqual({
      action: "set aside",
      participant: "sub-41",
      region: "L_dlpfc",
      reason: "motion spikes",
    });
  });

  it("read a restore event's reason from after, and its participant and region from after or, in older events, before", () => {
    const now = {
      setAsideId: "x",
      participant: "sub-41",
      region: null,
      restoredAt: "2026-12-04T12:00:00.000Z",
      reason: "rechecked",
    };
    expect(
      setAsideEventFacts({
        kind: "participant.restored",
        before: { participant: "sub-41", region: null, reason: "motion" },
        after: now,
      }),
    ).toEqual({
      action: "restored",
      participant: "sub-41",
      region: null,
      reason: "rechecked",
    });
    const older = {
      kind: "participant.restored",
      targetId: "sub-09",
      before: { participant: "sub-09", region: "dACC", reason: "motion" },
      after: { restoredAt: "2026-12-04T12:00:00.000Z", reason: null },
    };
    expect(setAsideEventFacts(older)).toEqual({
      action: "restored",
      participant: "sub-09",
      region: "dACC",
      reason: null,
    });
  });

  it("answer null for other kinds", () => {
    expect(
      setAsideEventFacts({ kind: "fit.run", before: null, after: { participant: "sub-01" } }),
    ).toBeNull();
  });
});

describe("the card's lines", () => {
  // Noon UTC: the same calendar day in every time zone from UTC−11 to UTC+11.
  const aside = {
    createdAt: "2026-12-03T12:00:00.000Z",
    createdBy: { name: "Maren Lindqvist" },
    reason: "motion spikes",
  };

  it("say when, by whom and why a participant was set aside", () => {
    expect(setAsideLine(aside)).toBe("Set aside on 3 Dec 2026 by Maren Lindqvist: motion spikes");
  });

  it("say when, by whom and why it was restored, or nothing while it is active", () => {
    expect(restoredLine({ restoredAt: null, restoredBy: null, restoreReason: null })).toBeNull();
    expect(
      restoredLine({
        restoredAt: "2026-12-04T12:00:00.000Z",
        restoredBy: { name: "Tomas Ferreira" },
        restoreReason: "motion rechecked",
      }),
    ).toBe("Restored on 4 Dec 2026 by Tomas Ferreira: motion rechecked");
    expect(
      restoredLine({
        restoredAt: "2026-12-04T12:00:00.000Z",
        restoredBy: { name: null },
        restoreReason: null,
      }),
    ).toBe("Restored on 4 Dec 2026 by a former member (no reason recorded)");
  });

  it("label the scope", () => {
    expect(scopeLabel(null)).toBe("All regions");
    expect(scopeLabel("L_dlpfc")).toBe("L_dlpfc");
  });
});
