/**
 * The API's view of a registered analysis plan (server/services/plans.ts)
 * and the plan part of a fit's view.
 */
import type { Plan } from "../plans";

export interface PlanView {
  id: string;
  studyId: string;
  /** SHA-256 (hex) of the canonical JSON (RFC 8785) of `plan` exactly as given here. */
  sha256: string;
  registeredAt: string;
  registeredBy: { id: string; name: string | null };
  /** Whether the study already held confirmed data when the plan was registered. */
  dataSeen: boolean;
  /** The plan this one replaces, and why; null for a first plan. */
  replaces: string | null;
  replaceReason: string | null;
  countersignedBy: { id: string; name: string | null } | null;
  countersignedAt: string | null;
  plan: Plan;
}

/** A fit compared with the plan current when it was created. */
export interface FitPlanView {
  id: string;
  sha256: string;
  registeredAt: string;
  /** The planned model the fit was compared with (null when the plan names none of its kind). */
  model: string | null;
  asPlanned: boolean;
  deviations: string[];
  /**
   * A specification curve only: the specification the plan names
   * (contract/plans.ts plannedCurveChoice), or null when it names none of
   * the curve's specifications.
   */
  curveChoice?: {
    model: string;
    estimator: string;
    covariates: string[];
    exclusions: number[];
  } | null;
}
