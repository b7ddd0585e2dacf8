/**
 * What the publish panel of a fit shows and allows, from the fit's status,
 * approval and seal and the caller's rights. Plain TypeScript (no React),
 * so it is tested on its own.
 */
import type { Publication } from "../../server/services/sealing";

export interface PublishState {
  stage: "unfinished" | "not-approved" | "approved" | "sealed";
  /** One plain sentence on where the fit stands. */
  line: string;
  canApprove: boolean;
  canSeal: boolean;
  /** Why a visible next step is not open yet, or null. */
  hint: string | null;
  /** The seal's hash, shortened for the badge and in full for copying. */
  hash: { short: string; full: string } | null;
  /** True when the stored recipe and result no longer hash to the seal. */
  broken: boolean;
}

export interface PublishRights {
  approve: boolean;
  seal: boolean;
}

function who(person: { name: string | null }): string {
  return person.name?.trim() || "a member";
}

/** `when` formats an ISO time for people (the screen passes its locale's format). */
export function publishState(
  fit: { status: string } & Publication,
  rights: PublishRights,
  when: (iso: string) => string = (iso) => iso.slice(0, 10),
): PublishState {
  if (fit.status !== "done") {
    return { stage: "unfinished", line: "Exports, approval and sealing open once the fit is done.", canApprove: false, canSeal: false, hint: null, hash: null, broken: false };
  }
  if (fit.seal) {
    const approved = fit.approval ? ` after approval by ${who(fit.approval.by)}` : "";
    return {
      stage: "sealed",
      line: `Sealed by ${who(fit.seal.by)} on ${when(fit.seal.at)}${approved}. Its data hashes, recipe and results can no longer change.`,
      canApprove: false,
      canSeal: false,
      hint: null,
      hash: { short: fit.seal.sha256.slice(0, 12), full: fit.seal.sha256 },
      broken: !fit.seal.intact,
    };
  }
  if (fit.approval) {
    return {
      stage: "approved",
      line: `Approved for sealing by ${who(fit.approval.by)} on ${when(fit.approval.at)}.`,
      canApprove: false,
      canSeal: rights.seal,
      hint: rights.seal ? null : "An Owner of the study seals an approved fit.",
      hash: null,
      broken: false,
    };
  }
  return {
    stage: "not-approved",
    line: "Not yet approved for sealing.",
    canApprove: rights.approve,
    canSeal: false,
    hint: rights.approve ? (rights.seal ? "Sealing opens once the fit is approved." : null) : "A Reviewer or Owner approves a fit before an Owner seals it.",
    hash: null,
    broken: false,
  };
}
