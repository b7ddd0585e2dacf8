/**
 * The study's analysis plans (GET/POST /api/studies/:studyId/plans,
 * POST /api/plans/:planId/countersign): key factory, query options and
 * hooks. Registering a plan can set participants aside by its rules and is
 * an activity event, so it invalidates set-asides, fits and activity too.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { fitKeys } from "./use-fits";
import { setAsideKeys } from "./use-set-asides";
import type { PlanInput } from "../contract/plans";
import type { PlanView } from "../contract/views/plans";

export type { PlanView };

export const planKeys = {
  all: ["plans"] as const,
  list: (studyId: string) => [...planKeys.all, studyId] as const,
};

const listPath = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/plans`;

/** Every plan of the study, newest (the current one) first. */
export const plansQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: planKeys.list(studyId),
    queryFn: () => apiFetch<PlanView[]>(listPath(studyId)),
  });

export function usePlans(studyId: string, enabled = true) {
  return useQuery({ ...plansQueryOptions(studyId), enabled });
}

function useInvalidateAfterChange(studyId: string) {
  const client = useQueryClient();
  return async () => {
    await client.invalidateQueries({ queryKey: planKeys.list(studyId) });
    await client.invalidateQueries({ queryKey: setAsideKeys.list(studyId) });
    await client.invalidateQueries({ queryKey: activityKeys.all(studyId) });
    await client.invalidateQueries({ queryKey: fitKeys.all });
  };
}

/** Registers a plan; a new version names the plan it replaces and why. */
export function useRegisterPlan(studyId: string) {
  const invalidate = useInvalidateAfterChange(studyId);
  return useMutation({
    mutationFn: (input: { plan: PlanInput; replaces?: string; reason?: string }) =>
      apiFetch<PlanView>(listPath(studyId), jsonBody("POST", input)),
    onSuccess: invalidate,
  });
}

export function useCountersignPlan(studyId: string) {
  const invalidate = useInvalidateAfterChange(studyId);
  return useMutation({
    mutationFn: (planId: string) =>
      apiFetch<PlanView>(
        `/api/plans/${encodeURIComponent(planId)}/countersign`,
        jsonBody("POST", {}),
      ),
    onSuccess: invalidate,
  });
}
