/**
 * A short-lived in-process cache of the two look-ups every API request makes:
 * session token → person, and (study, person) → membership. Only answers
 * that grant something are cached; every change to sessions, memberships or
 * a study's row drops the affected entries (the services that make those
 * changes call the `forget…` functions after their transaction), and entries
 * expire after a few seconds in any case. One cache per database, so test
 * apps on separate databases never share entries.
 *
 * Why: the embedded database serves one query at a time on the request
 * thread, and these two queries were a third of a typical read's work.
 */
import type { Role, Study } from "../../db/schema";

const TTL_MS = 5_000;
const MAX_ENTRIES = 10_000;

interface Entry<T> {
  value: T;
  storedAt: number;
}

interface Caches {
  sessions: Map<string, Entry<{ user: { id: string; email: string; name: string | null }; expires: Date }>>;
  memberships: Map<string, Entry<{ study: Study; role: Role }>>;
}

const byDatabase = new WeakMap<object, Caches>();

function cachesOf(db: object): Caches {
  let caches = byDatabase.get(db);
  if (!caches) {
    caches = { sessions: new Map(), memberships: new Map() };
    byDatabase.set(db, caches);
  }
  return caches;
}

function read<T>(map: Map<string, Entry<T>>, key: string, now: number): T | undefined {
  const entry = map.get(key);
  if (!entry) return undefined;
  if (now - entry.storedAt > TTL_MS) {
    map.delete(key);
    return undefined;
  }
  return entry.value;
}

function write<T>(map: Map<string, Entry<T>>, key: string, value: T, now: number): void {
  if (map.size >= MAX_ENTRIES) map.clear();
  map.set(key, { value, storedAt: now });
}

export function cachedSession(db: object, token: string, now: Date) {
  const hit = read(cachesOf(db).sessions, token, Date.now());
  return hit && hit.expires > now ? hit.user : undefined;
}

export function rememberSession(db: object, token: string, user: { id: string; email: string; name: string | null }, expires: Date): void {
  write(cachesOf(db).sessions, token, { user, expires }, Date.now());
}

export function forgetSession(db: object, token: string): void {
  cachesOf(db).sessions.delete(token);
}

const membershipKey = (studyId: string, userId: string) => `${studyId}\u0000${userId}`;

export function cachedMembership(db: object, studyId: string, userId: string) {
  return read(cachesOf(db).memberships, membershipKey(studyId, userId), Date.now());
}

export function rememberMembership(db: object, studyId: string, userId: string, found: { study: Study; role: Role }): void {
  write(cachesOf(db).memberships, membershipKey(studyId, userId), found, Date.now());
}

/** Drops every cached membership of a study (its row or one of its members changed). */
export function forgetStudyMemberships(db: object, studyId: string): void {
  const prefix = `${studyId}\u0000`;
  const map = cachesOf(db).memberships;
  for (const key of map.keys()) if (key.startsWith(prefix)) map.delete(key);
}
