/**
 * Opening one specification of a specification curve as an ordinary fit:
 * its model (contract/specification-curve.ts `specificationModel`: the
 * specification's estimator and covariates, the rules it switched on as
 * `exclusionRules`, parametric inference, the curve's region and seed),
 * through the ordinary model and fit routes. A model of the study with the
 * same fields (`sameModelFields`) is reused rather than duplicated, and so
 * is its latest fit when that is not stale (same data, set-asides and
 * model) and did not fail or stop; otherwise a fit of it is started.
 * Resolves to the fit to open.
 */
import { useMutation, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { fitKeys, fitsQueryOptions, type FitView } from "./use-fits";
import { modelKeys, modelsQueryOptions, type ModelView } from "./use-models";
import { studyKeys } from "./use-studies";
import { type RegionSelection, sameModelFields } from "../contract/model-form";
import type { ModelSpec } from "../contract/spec";
import { type CurveSpecification, specificationModel } from "../contract/specification-curve";

export interface OpenSpecification {
  /** The curve's model fields (from its fit's recipe). */
  curve: ModelSpec;
  curveModel: { id: string; name: string; circular: boolean };
  /** 1-based place of the specification in the curve's estimate order (names the new model). */
  index: number;
  choice: Pick<CurveSpecification, "estimator" | "covariates" | "exclusions">;
}

/** "⟨curve model⟩ · specification k" */
export function specificationModelName(curveModel: string, index: number): string {
  return `${curveModel} · specification ${index}`;
}

export function useOpenSpecification(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: async (input: OpenSpecification): Promise<{ fitId: string; reused: boolean }> => {
      const spec = specificationModel(input.curve, {
        ...input.choice,
        estimator: input.choice.estimator as ModelSpec["estimator"],
      });
      const models = await client.fetchQuery({ ...modelsQueryOptions(studyId), staleTime: 0 });
      let model: ModelView | undefined = models.find((m) => sameModelFields(m.spec, spec));
      if (model) {
        const fits = await client.fetchQuery({ ...fitsQueryOptions(studyId), staleTime: 0 });
        const latest = fits
          .filter((f) => f.model.id === model?.id)
          .sort((a, b) => b.createdAt.localeCompare(a.createdAt))[0];
        if (latest && !latest.stale && latest.status !== "failed" && latest.status !== "cancelled")
          return { fitId: latest.id, reused: true };
      } else {
        const curveModel = models.find((m) => m.id === input.curveModel.id);
        const regionSelection: RegionSelection =
          curveModel?.regionSelection ??
          (input.curveModel.circular ? "same-data" : "anatomical-or-prior");
        const base = specificationModelName(input.curveModel.name, input.index);
        const taken = new Set(models.map((m) => m.name));
        let name = base;
        for (let k = 2; taken.has(name); k++) name = `${base} (${k})`;
        try {
          model = await apiFetch<ModelView>(
            `/api/studies/${encodeURIComponent(studyId)}/models`,
            jsonBody("POST", { name, spec, regionSelection }),
          );
        } finally {
          await client.invalidateQueries({ queryKey: modelKeys.all(studyId) });
        }
      }
      const fit = await apiFetch<FitView>(
        `/api/studies/${encodeURIComponent(studyId)}/fits`,
        jsonBody("POST", { modelId: model.id }),
      );
      return { fitId: fit.id, reused: false };
    },
    onSettled: async () => {
      await client.invalidateQueries({ queryKey: fitKeys.all });
      await client.invalidateQueries({ queryKey: modelKeys.all(studyId) });
      await client.invalidateQueries({ queryKey: studyKeys.all });
    },
  });
}
