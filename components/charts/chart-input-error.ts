/**
 * The one failure contract of the plot helpers: bad plot input (a histogram
 * whose edges do not match its counts, a power outside 0–1, a missing value
 * where one is required) throws a `ChartInputError` that names the field and,
 * where there is one, the position in it. Plot components catch it and show
 * the message in place of the plot instead of breaking the screen.
 */
export class ChartInputError extends Error {
  readonly field: string;
  readonly index: number | null;

  constructor(field: string, message: string, index: number | null = null) {
    super(index === null ? `${field}: ${message}` : `${field}[${index}]: ${message}`);
    this.name = "ChartInputError";
    this.field = field;
    this.index = index;
  }
}

/** Throws a `ChartInputError` naming `field[index]` unless `value` is a finite number. */
export function requireFinite(value: unknown, field: string, index: number | null = null): number {
  if (typeof value !== "number" || !Number.isFinite(value)) {
    throw new ChartInputError(field, `must be a finite number (got ${describe(value)})`, index);
  }
  return value;
}

function describe(value: unknown): string {
  if (value === null) return "null";
  if (value === undefined) return "nothing";
  if (typeof value === "number") return String(value);
  if (typeof value === "string") return `"${value}"`;
  return typeof value;
}

/**
 * Runs a layout computation; a `ChartInputError` becomes `{ problem }` (its
 * message, for the plot to show in place of the drawing), any other error is
 * rethrown as a bug.
 */
export function tryLayout<T>(
  compute: () => T,
): { layout: T; problem: null } | { layout: null; problem: string } {
  try {
    return { layout: compute(), problem: null };
  } catch (error) {
    if (error instanceof ChartInputError) return { layout: null, problem: error.message };
    throw error;
  }
}
