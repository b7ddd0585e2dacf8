import { useMutation } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import type { PlannerAnswer, PlannerQuestionInput } from "../contract/planner";

export type { PlannerAnswer, PlannerQuestionInput };

/** Asks the server's planner; a computation, so a mutation rather than a cached read. */
export function usePlanner() {
  return useMutation({
    mutationFn: (question: PlannerQuestionInput) =>
      apiFetch<PlannerAnswer>("/api/planner", jsonBody("POST", question)),
  });
}
