/**
 * The one failure contract of the statistics engine.
 *
 * Every method throws a `StatsError` when its preconditions are not met,
 * with a fixed-format message that names the function and what it requires
 * ("welchTTest requires at least two values per group"). The API maps it to
 * 422 and the recipe command to exit code 2. Methods never return a silent
 * NaN or null in place of an error.
 */
export class StatsError extends Error {
  readonly code: string;
  /** What the caller may show beside the message (e.g. a cost and its limit); JSON only. */
  readonly details: Record<string, unknown> | undefined;

  constructor(message: string, code = "stats_precondition", details?: Record<string, unknown>) {
    super(message);
    this.name = "StatsError";
    this.code = code;
    this.details = details;
  }
}

/** Throws a StatsError with `message` unless `condition` holds. */
export function require(condition: boolean, message: string): asserts condition {
  if (!condition) throw new StatsError(message);
}
