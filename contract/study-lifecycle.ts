/**
 * How long a deleted study can be restored, shared by the studies service
 * (which refuses a later restore) and the web app (which says so before
 * deleting). No imports, so the web app can use it.
 */

/** An Owner can restore a deleted study for this many days. After that it stays stored but can no longer be restored. */
export const restoreWindowDays = 30;

/** The restore window in milliseconds. */
export const restoreWindowMs = restoreWindowDays * 24 * 60 * 60 * 1000;

/** The last moment a study deleted at `deletedAt` can be restored. */
export function restorableUntil(deletedAt: Date): Date {
  return new Date(deletedAt.getTime() + restoreWindowMs);
}
