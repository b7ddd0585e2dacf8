/**
 * A person's remembered screen choices (contract/preferences.ts names the
 * keys and the shape of each value). Values are checked against the
 * contract on the way in and again on the way out, so a value stored under
 * an older shape is left out rather than handed to a screen that cannot
 * read it.
 */
import { and, eq } from "drizzle-orm";
import type { Database } from "../../db/client";
import { userPreferences } from "../../db/schema";
import {
  type PreferenceKey,
  type Preferences,
  isPreferenceKey,
  preferenceSchemas,
} from "../../contract/preferences";

export async function readPreferences(db: Database, userId: string): Promise<Preferences> {
  const rows = await db
    .select({ key: userPreferences.key, value: userPreferences.value })
    .from(userPreferences)
    .where(eq(userPreferences.userId, userId));
  const out: Record<string, unknown> = {};
  for (const row of rows) {
    if (!isPreferenceKey(row.key)) continue;
    const checked = preferenceSchemas[row.key].safeParse(row.value);
    if (checked.success) out[row.key] = checked.data;
  }
  return out as Preferences;
}

/** Stores one preference (its value already checked against the contract). */
export async function writePreference(
  db: Database,
  userId: string,
  key: PreferenceKey,
  value: unknown,
  now: Date,
): Promise<void> {
  await db
    .insert(userPreferences)
    .values({ userId, key, value, updatedAt: now })
    .onConflictDoUpdate({
      target: [userPreferences.userId, userPreferences.key],
      set: { value, updatedAt: now },
    });
}

/** Forgets one preference; the screen falls back to its default. */
export async function clearPreference(
  db: Database,
  userId: string,
  key: PreferenceKey,
): Promise<void> {
  await db
    .delete(userPreferences)
    .where(and(eq(userPreferences.userId, userId), eq(userPreferences.key, key)));
}
