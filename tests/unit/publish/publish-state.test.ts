/**
 * What the publish panel shows and allows, by the fit's stage, the caller's
 * rights (permission table: approve = Owner, Reviewer; seal = Owner), who
 * the caller is, and the study's "A second person signs off".
 */
import { describe, expect, it } from "vitest";
import { publishState } from "../../../components/fit/publish-state";
import {
  approvalRefusalMessage,
  sealRefusalMessage,
  singlePersonSealNote,
  singlePersonWarning,
} from "../../../contract/sign-off";

const tomas = { id: "u3", name: "Tomas Ferreira" };
const owner = { approve: true, seal: true, id: "u1" };
const reviewer = { approve: true, seal: false, id: "u2" };
const analyst = { approve: false, seal: false, id: tomas.id };
const on = { secondPersonSignOff: true };
const off = { secondPersonSignOff: false };
const approval = { by: { id: "u2", name: "Rowan Reviewer" }, at: "2026-03-02T10:00:00.000Z" };
const seal = {
  by: { id: "u1", name: "Oda Owner" },
  at: "2026-03-03T09:30:00.000Z",
  sha256: "ab12".repeat(16),
  intact: true,
  singlePersonSignOff: false,
};
/** A done fit the Analyst started. */
const done = { status: "done", createdBy: tomas, approval: null, seal: null };

describe("publish panel state", () => {
  it("an unfinished fit offers nothing", () => {
    const s = publishState({ ...done, status: "running" }, owner, on);
    expect(s).toMatchObject({
      stage: "unfinished",
      canApprove: false,
      canSeal: false,
      hash: null,
      refusal: null,
    });
  });

  it("a done fit: Owner and Reviewer may approve, nobody may seal yet; the line says who may approve", () => {
    expect(publishState(done, owner, on)).toMatchObject({
      stage: "not-approved",
      canApprove: true,
      canSeal: false,
      hint: "Sealing opens once the fit is approved.",
      refusal: null,
    });
    expect(publishState(done, reviewer, on)).toMatchObject({
      canApprove: true,
      canSeal: false,
      hint: null,
    });
    expect(publishState(done, analyst, on)).toMatchObject({
      canApprove: false,
      canSeal: false,
      hint: "A Reviewer or Owner approves a fit before an Owner seals it.",
      refusal: null,
    });
    expect(publishState(done, owner, on).line).toBe(
      "Not yet approved for sealing. Waiting for a Reviewer or Owner other than Tomas Ferreira to approve.",
    );
    expect(publishState(done, analyst, on).line).toBe(
      "Not yet approved for sealing. Waiting for a Reviewer or Owner other than you to approve.",
    );
    expect(publishState(done, owner, off).line).toBe(
      "Not yet approved for sealing. Waiting for a Reviewer or Owner to approve.",
    );
  });

  it("while the setting is on, the Owner who started the fit sees why instead of an Approve button", () => {
    const mine = { ...done, createdBy: { id: owner.id, name: "Oda Owner" } };
    const s = publishState(mine, owner, on);
    expect(s).toMatchObject({
      canApprove: false,
      canSeal: false,
      hint: null,
      refusal: approvalRefusalMessage,
    });
    expect(s.line).toBe(
      "Not yet approved for sealing. Waiting for a Reviewer or Owner other than you to approve.",
    );
    // Before the panel knows who the caller is, the button shows (the server still applies the rule).
    expect(publishState(mine, { ...owner, id: null }, on)).toMatchObject({
      canApprove: true,
      refusal: null,
    });
    // While it is off, the starter may approve and is told what signing off alone records.
    expect(publishState(mine, owner, off)).toMatchObject({
      canApprove: true,
      refusal: null,
      hint: singlePersonWarning,
    });
  });

  it("an approved fit: only the Owner may seal; the line says who may seal", () => {
    const fit = { ...done, approval };
    expect(publishState(fit, owner, on)).toMatchObject({
      stage: "approved",
      canApprove: false,
      canSeal: true,
      hint: null,
      refusal: null,
    });
    expect(publishState(fit, reviewer, on)).toMatchObject({
      canApprove: false,
      canSeal: false,
      hint: "An Owner of the study seals an approved fit.",
    });
    expect(publishState(fit, owner, on).line).toBe(
      "Approved for sealing by Rowan Reviewer on 2026-03-02. Waiting for an Owner to seal.",
    );
  });

  it("a fit its starter approved while the setting was off: that Owner may not seal it once the setting is on", () => {
    const starter = { id: owner.id, name: "Oda Owner" };
    const fit = { ...done, createdBy: starter, approval: { ...approval, by: starter } };
    expect(publishState(fit, owner, on)).toMatchObject({
      canSeal: false,
      refusal: sealRefusalMessage,
    });
    expect(publishState(fit, owner, on).line).toBe(
      "Approved for sealing by Oda Owner on 2026-03-02. Waiting for an Owner other than you to seal.",
    );
    expect(publishState(fit, { ...owner, id: "u9" }, on)).toMatchObject({
      canSeal: true,
      refusal: null,
    });
    expect(publishState(fit, { ...owner, id: "u9" }, on).line).toBe(
      "Approved for sealing by Oda Owner on 2026-03-02. Waiting for an Owner other than Oda Owner to seal.",
    );
    expect(publishState(fit, owner, off)).toMatchObject({
      canSeal: true,
      refusal: null,
      hint: singlePersonWarning,
    });
    expect(publishState(fit, owner, off).line).toBe(
      "Approved for sealing by Oda Owner on 2026-03-02. Waiting for an Owner to seal.",
    );
  });

  it("a sealed fit: no actions, the hash shortened to 12 digits and in full, broken when not intact", () => {
    const s = publishState({ ...done, approval, seal }, owner, on);
    expect(s).toMatchObject({
      stage: "sealed",
      canApprove: false,
      canSeal: false,
      broken: false,
      signOffNote: null,
      hash: { short: "ab12ab12ab12", full: seal.sha256 },
    });
    expect(s.line).toBe(
      "Sealed by Oda Owner on 2026-03-03 after approval by Rowan Reviewer. Its data hashes, recipe and results can no longer change.",
    );
    expect(
      publishState({ ...done, approval, seal: { ...seal, intact: false } }, owner, on).broken,
    ).toBe(true);
  });

  it("a seal that records single-person sign-off says so, whatever the setting is now", () => {
    const one = { id: owner.id, name: "Oda Owner" };
    const fit = {
      ...done,
      createdBy: one,
      approval: { ...approval, by: one },
      seal: { ...seal, singlePersonSignOff: true },
    };
    for (const study of [on, off])
      expect(publishState(fit, reviewer, study).signOffNote).toBe(singlePersonSealNote);
    expect(singlePersonSealNote).toBe(
      "One person started, approved and sealed this fit: the study's setting “A second person signs off” was off.",
    );
  });

  it("names a person without a name as a member", () => {
    const s = publishState(
      { ...done, approval: { ...approval, by: { id: "u2", name: null } } },
      owner,
      on,
    );
    expect(s.line).toBe(
      "Approved for sealing by a member on 2026-03-02. Waiting for an Owner to seal.",
    );
  });
});
