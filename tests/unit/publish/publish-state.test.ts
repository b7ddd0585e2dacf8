/**
 * What the publish panel shows and allows, by the fit's stage and the
 * caller's rights (permission table: approve = Owner, Reviewer; seal = Owner).
 */
import { describe, expect, it } from "vitest";
import { publishState } from "../../../components/fit/publish-state";

const owner = { approve: true, seal: true };
const reviewer = { approve: true, seal: false };
const analyst = { approve: false, seal: false };
const approval = { by: { id: "u2", name: "Rowan Reviewer" }, at: "2026-03-02T10:00:00.000Z" };
const seal = { by: { id: "u1", name: "Oda Owner" }, at: "2026-03-03T09:30:00.000Z", sha256: "ab12".repeat(16), intact: true, singlePersonSignOff: false };

describe("publish panel state", () => {
  it("an unfinished fit offers nothing", () => {
    const s = publishState({ status: "running", approval: null, seal: null }, owner);
    expect(s).toMatchObject({ stage: "unfinished", canApprove: false, canSeal: false, hash: null });
  });

  it("a done fit: Owner and Reviewer may approve, nobody may seal yet", () => {
    const fit = { status: "done", approval: null, seal: null };
    expect(publishState(fit, owner)).toMatchObject({ stage: "not-approved", canApprove: true, canSeal: false, hint: "Sealing opens once the fit is approved." });
    expect(publishState(fit, reviewer)).toMatchObject({ canApprove: true, canSeal: false, hint: null });
    expect(publishState(fit, analyst)).toMatchObject({ canApprove: false, canSeal: false, hint: "A Reviewer or Owner approves a fit before an Owner seals it." });
    expect(publishState(fit, owner).line).toBe("Not yet approved for sealing.");
  });

  it("an approved fit: only the Owner may seal", () => {
    const fit = { status: "done", approval, seal: null };
    expect(publishState(fit, owner)).toMatchObject({ stage: "approved", canApprove: false, canSeal: true, hint: null });
    expect(publishState(fit, reviewer)).toMatchObject({ canApprove: false, canSeal: false, hint: "An Owner of the study seals an approved fit." });
    expect(publishState(fit, owner).line).toBe("Approved for sealing by Rowan Reviewer on 2026-03-02.");
  });

  it("a sealed fit: no actions, the hash shortened to 12 digits and in full, broken when not intact", () => {
    const s = publishState({ status: "done", approval, seal }, owner);
    expect(s).toMatchObject({ stage: "sealed", canApprove: false, canSeal: false, broken: false, hash: { short: "ab12ab12ab12", full: seal.sha256 } });
    expect(s.line).toBe("Sealed by Oda Owner on 2026-03-03 after approval by Rowan Reviewer. Its data hashes, recipe and results can no longer change.");
    expect(publishState({ status: "done", approval, seal: { ...seal, intact: false } }, owner).broken).toBe(true);
  });

  it("names a person without a name as a member", () => {
    const s = publishState({ status: "done", approval: { ...approval, by: { id: "u2", name: null } }, seal: null }, owner);
    expect(s.line).toBe("Approved for sealing by a member on 2026-03-02.");
  });
});
