/**
 * The statistics engine's one re-export index. Route handlers and services
 * import from here; each line re-exports one pure module.
 */
export * from "./errors";
export * from "./rng";
export * from "./distributions";
export * from "./descriptive";
export * from "./ranks";
export * from "./roots";
export * from "./one-sample-t";
export * from "./two-sample-t";
export * from "./effect-size";
export * from "./exact-rank-distributions";
export * from "./hodges-lehmann";
export * from "./wilcoxon-signed-rank";
export * from "./mann-whitney";
export * from "./linear-model";
export * from "./mean-response-band";
export * from "./region-plot";
export * from "./design-matrix";
export * from "./diagnostics";
export * from "./correlation";
export * from "./spearman";
export * from "./kendall";
export * from "./robust-regression";
export * from "./robust-correlation";
export * from "./corrections";
export * from "./compare-correlations";
export * from "./meta-regression";
export * from "./weighted-least-squares";
export * from "./icc";
export * from "./attenuation";
export * from "./power";
export * from "./power-simulation";
export * from "./planner";
export * from "./permutation";
export * from "./permutation-kernel";
export * from "./rearrangements";
export * from "./generic-permutation";
export * from "./bootstrap";
export * from "./region-data";
export * from "./fit-methods";
export * from "./permutation-statistic";
export * from "./bootstrap-statistic";
export * from "./run-fit";
