import { useMutation } from "@tanstack/react-query";
import { apiFetch, apiFile, jsonBody } from "./api";
import type { PlannerAnswer, PlannerQuestionInput } from "../contract/planner";
import type { FigureWidth } from "../contract/views/figures";

export type { PlannerAnswer, PlannerQuestionInput };

/** Asks the server's planner; a computation, so a mutation rather than a cached read. */
export function usePlanner() {
  return useMutation({
    mutationFn: (question: PlannerQuestionInput) =>
      apiFetch<PlannerAnswer>("/api/planner", jsonBody("POST", question)),
  });
}

/** A file of the power curve drawn on the server from `question` (POST /api/planner/figure.*). */
export interface PlannerFigureFile {
  /** Address the question is posted to. */
  path: string;
  /** The name the file is saved under (the server's Content-Disposition name). */
  fileName: string;
}

/** The power curve's downloads: SVG (one column), PNG one or two columns wide, caption. */
export function plannerFigureFile(
  ext: "svg" | "png" | "txt",
  widthMm: FigureWidth = 89,
): PlannerFigureFile {
  if (ext === "txt")
    return { path: "/api/planner/figure.txt", fileName: "planner-power-curve.txt" };
  return {
    path: `/api/planner/figure.${ext}?width=${widthMm}`,
    fileName: `planner-power-curve-${widthMm}mm.${ext}`,
  };
}

/** Posts the question and answers the file's bytes (an ApiError on refusal). */
export function fetchPlannerFigure(
  file: PlannerFigureFile,
  question: PlannerQuestionInput,
): Promise<Blob> {
  return apiFile(file.path, jsonBody("POST", question));
}
