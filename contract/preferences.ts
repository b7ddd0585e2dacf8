/**
 * What a person's screens remember for them, wherever they sign in: each
 * preference's key and the shape of its value, in one place for the API
 * (`GET /api/me/preferences`, `PUT /api/me/preferences/:key`), which refuses
 * unknown keys and values of the wrong shape, and the web app, which reads
 * them through `usePreference`. Zod only, so the web app can use it.
 */
import { z } from "zod";

/** A column id of a table the person can show or hide. */
const columnId = z.string().min(1).max(64);

export const preferenceSchemas = {
  /** The region table's optional columns the person chose to show, in order. */
  "region-table.columns": z.array(columnId).max(40),
} as const;

export type PreferenceKey = keyof typeof preferenceSchemas;
export type PreferenceValue<K extends PreferenceKey> = z.infer<(typeof preferenceSchemas)[K]>;

export const preferenceKeys = Object.keys(preferenceSchemas) as [PreferenceKey, ...PreferenceKey[]];

export function isPreferenceKey(key: string): key is PreferenceKey {
  return Object.hasOwn(preferenceSchemas, key);
}

/** The stored preferences of one person; keys they never set are absent. */
export type Preferences = Partial<{ [K in PreferenceKey]: PreferenceValue<K> }>;
