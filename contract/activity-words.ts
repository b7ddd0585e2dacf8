/**
 * Activity sentences that name who was acted on, in one place (the actor's
 * name opens every sentence on the Activity screen): "removed Jonah Adeyemi
 * (Viewer)", "approved ‘accuracy with age’ for sealing". Pure strings (no
 * framework imports: the web app imports this module). Set-asides have
 * their own module (set-aside-words.ts).
 */
import { type NoticeKind, noticeEventWords } from "./notices";

/** A person as the audit event recorded them (older events carry only the e-mail). */
export interface PersonFacts {
  name: string | null;
  email: string | null;
  role: string | null;
}

export function roleWord(role: string | null): string {
  return role ? role.charAt(0).toUpperCase() + role.slice(1) : "member";
}

/** A person's name, else their e-mail address, else "a member". */
export function personWords(person: Pick<PersonFacts, "name" | "email">): string {
  return person.name ?? person.email ?? "a member";
}

/** "removed Jonah Adeyemi (Viewer)" */
export function memberRemovedWords(person: PersonFacts): string {
  return `removed ${personWords(person)}${person.role ? ` (${roleWord(person.role)})` : ""}`;
}

/** "changed Jonah Adeyemi's role from Viewer to Analyst" */
export function roleChangedWords(person: PersonFacts, to: string | null): string {
  return `changed ${personWords(person)}'s role from ${roleWord(person.role)} to ${roleWord(to)}`;
}

/** A fit named by its model: "‘accuracy with age’", or "a fit" when the model's name is not known. */
export function fitWords(modelName: string | null): string {
  return modelName ? `the fit of ‘${modelName}’` : "a fit";
}

/** "ran a fit of “accuracy with age” (seed 1234, 2 set aside)" */
export function fitRunWords(
  modelName: string | null,
  seed: string | null,
  setAside: string | number | null,
): string {
  return `ran a fit of “${modelName ?? "a model"}” (seed ${seed ?? "?"}, ${setAside ?? 0} set aside)`;
}

/** "approved the fit of ‘accuracy with age’ for sealing" */
export function fitApprovedWords(modelName: string | null): string {
  return `approved ${fitWords(modelName)} for sealing`;
}

/** "cancelled the fit of ‘accuracy with age’" */
export function fitCancelledWords(modelName: string | null): string {
  return `cancelled ${fitWords(modelName)}`;
}

/** "sealed the fit of ‘accuracy with age’ (SHA-256 0123456789ab…)" */
export function fitSealedWords(
  modelName: string | null,
  sha256: string,
  singlePersonSignOff: boolean,
): string {
  return `sealed ${fitWords(modelName)} (SHA-256 ${sha256.slice(0, 12)}…)${singlePersonSignOff ? " that they had also started and approved" : ""}`;
}

/** "registered the plan ‘Accuracy and prefrontal activity’ (SHA-256 0123456789ab…), a new version" */
export function planRegisteredWords(title: string, sha256: string, newVersion: boolean): string {
  return `registered the plan ‘${title}’ (SHA-256 ${sha256.slice(0, 12)}…)${newVersion ? ", a new version" : ""}`;
}

/** "countersigned the plan (SHA-256 0123456789ab…)" */
export function planCountersignedWords(sha256: string): string {
  return `countersigned the plan (SHA-256 ${sha256.slice(0, 12)}…)`;
}

function peopleWords(count: number): string {
  return `${count} ${count === 1 ? "person" : "people"}`;
}

/** "e-mailed 3 people that the fit of ‘accuracy with age’ waits for approval" (the event records who, not what the e-mail said). */
export function noticesSentWords(
  notice: NoticeKind,
  count: number,
  modelName: string | null,
): string {
  return `e-mailed ${peopleWords(count)} that ${fitWords(modelName)} ${noticeEventWords[notice]}`;
}

/** "could not e-mail 2 people that the fit of ‘accuracy with age’ was sealed (ECONNREFUSED)" */
export function noticesFailedWords(
  notice: NoticeKind,
  count: number,
  modelName: string | null,
  error: string | null,
): string {
  return `could not e-mail ${peopleWords(count)} that ${fitWords(modelName)} ${noticeEventWords[notice]}${error ? ` (${error})` : ""}`;
}
