/**
 * What the publish panel of a fit shows and allows, from the fit's status,
 * who started it, its approval and seal, the caller's rights and the
 * study's "A second person signs off" (contract/sign-off.ts): who may
 * act next, and to the person the rule stops, why. Plain TypeScript (no
 * React), so it is tested on its own.
 */
import {
  approvalRefusalMessage,
  mayApprove,
  maySeal,
  sealRefusalMessage,
  type SignOffPerson,
  singlePersonSealNote,
  singlePersonWarning,
  whoMayApprove,
  whoMaySeal,
} from "../../contract/sign-off";
import type { Publication } from "../../contract/views/fits";

export interface PublishState {
  stage: "unfinished" | "not-approved" | "approved" | "sealed";
  /** One plain sentence on where the fit stands and who may act next. */
  line: string;
  canApprove: boolean;
  canSeal: boolean;
  /** Why a visible next step is not open yet, or null. */
  hint: string | null;
  /** Why the caller, whose role would allow the next step, may not take it ("A second person signs off"), or null. */
  refusal: string | null;
  /** Said on a seal that records one person starting, approving and sealing the fit, or null. */
  signOffNote: string | null;
  /** The seal's hash, shortened for the badge and in full for copying. */
  hash: { short: string; full: string } | null;
  /** True when the stored recipe and result no longer hash to the seal. */
  broken: boolean;
}

/** What the caller's role allows (the study's capabilities) and who the caller is (null while unknown). */
export interface PublishViewer {
  approve: boolean;
  seal: boolean;
  id: string | null;
}

/** The fit as the panel needs it (a FitView has these). */
export type PublishFit = { status: string; createdBy: SignOffPerson } & Publication;

function who(person: { name: string | null }): string {
  return person.name?.trim() || "a member";
}

/** `when` formats an ISO time for people (the screen passes its locale's format). */
export function publishState(
  fit: PublishFit,
  viewer: PublishViewer,
  study: { secondPersonSignOff: boolean },
  when: (iso: string) => string = (iso) => iso.slice(0, 10),
): PublishState {
  const none = { refusal: null, signOffNote: null, hash: null, broken: false };
  const rule = study.secondPersonSignOff;
  const starter = fit.createdBy;
  const isStarter = viewer.id !== null && viewer.id === starter.id;
  if (fit.status !== "done") {
    return {
      ...none,
      stage: "unfinished",
      line: "Exports, approval and sealing open once the fit is done.",
      canApprove: false,
      canSeal: false,
      hint: null,
    };
  }
  if (fit.seal) {
    const approved = fit.approval ? ` after approval by ${who(fit.approval.by)}` : "";
    return {
      ...none,
      stage: "sealed",
      line: `Sealed by ${who(fit.seal.by)} on ${when(fit.seal.at)}${approved}. Its data hashes, recipe and results can no longer change.`,
      canApprove: false,
      canSeal: false,
      hint: null,
      signOffNote: fit.seal.singlePersonSignOff ? singlePersonSealNote : null,
      hash: { short: fit.seal.sha256.slice(0, 12), full: fit.seal.sha256 },
      broken: !fit.seal.intact,
    };
  }
  if (fit.approval) {
    const approver = fit.approval.by;
    const allowed = viewer.id === null || maySeal(rule, starter.id, approver.id, viewer.id);
    const canSeal = viewer.seal && allowed;
    const alone = !rule && isStarter && approver.id === viewer.id;
    return {
      ...none,
      stage: "approved",
      line: `Approved for sealing by ${who(approver)} on ${when(fit.approval.at)}. Waiting for ${whoMaySeal(rule, starter, approver, viewer.id)} to seal.`,
      canApprove: false,
      canSeal,
      hint: !viewer.seal
        ? "An Owner of the study seals an approved fit."
        : canSeal && alone
          ? singlePersonWarning
          : null,
      refusal: viewer.seal && !allowed ? sealRefusalMessage : null,
    };
  }
  const allowed = viewer.id === null || mayApprove(rule, starter.id, viewer.id);
  const canApprove = viewer.approve && allowed;
  return {
    ...none,
    stage: "not-approved",
    line: `Not yet approved for sealing. Waiting for ${whoMayApprove(rule, starter, viewer.id)} to approve.`,
    canApprove,
    canSeal: false,
    hint: !viewer.approve
      ? "A Reviewer or Owner approves a fit before an Owner seals it."
      : !canApprove
        ? null
        : !rule && isStarter && viewer.seal
          ? singlePersonWarning
          : viewer.seal
            ? "Sealing opens once the fit is approved."
            : null,
    refusal: viewer.approve && !allowed ? approvalRefusalMessage : null,
  };
}
