/**
 * The study setting "A second person signs off" and its rule, in one place
 * for the server (approval and seal refuse what the rule forbids) and the
 * web app (the publish panel says who may act next and, to the person who
 * may not, why; the Team screen and the Activity trail name the setting).
 * No imports, so the web app can use it.
 *
 * While the setting is on (the default):
 * - approval: the person who started a fit (`fits.created_by`) cannot
 *   approve it;
 * - seal: one person cannot start, approve and seal the same fit. With the
 *   approval rule in place this happens only when the setting was off when
 *   the fit was approved and was turned on before the seal. The seal then
 *   needs an Owner other than the person who started and approved it:
 *   approvals are append-only, so the rule does not ask for a new approval
 *   — an Owner other than the starter sealing the fit is the second person
 *   who signs off.
 *
 * While it is off (a one-person lab), both are allowed; a seal by the
 * person who also started and approved the fit records that one person
 * signed off (`fit_seals.single_person_sign_off`), and the publish panel
 * and the methods paragraph say so. That is exactly the case the seal rule
 * refuses while the setting is on; a fit its starter approved and another
 * Owner sealed had a second person sign off and records nothing.
 */

/** The setting's name as screens, messages and the methods paragraph show it. */
export const secondPersonSignOffLabel = "A second person signs off";

/** One line under the Team screen's toggle. */
export const secondPersonSignOffExplanation =
  "While on, whoever started a fit cannot approve it, so a second Reviewer or Owner checks every fit before it is sealed. A one-person lab can turn it off; a fit one person started, approved and sealed then says so on its seal and in its methods paragraph.";

/** The error code of an approval or seal the rule refuses (409). */
export const secondPersonRequiredCode = "second_person_required";

/** Where an Owner turns the setting off, said in every refusal. */
const turnOff = `for a one-person lab, an Owner can turn the setting off under Team → Study settings`;

/** Why the person who started a fit may not approve it (the 409 message and the publish panel's hint; addressed to that person). */
export const approvalRefusalMessage =
  `You started this fit, and this study's setting “${secondPersonSignOffLabel}” is on: the person who started a fit cannot approve it. ` +
  `A Reviewer or Owner other than you approves it; ${turnOff}.`;

/** Why the person who started and approved a fit may not also seal it (the 409 message and the panel's hint; addressed to that person). */
export const sealRefusalMessage =
  `You started and approved this fit, and this study's setting “${secondPersonSignOffLabel}” is on: one person cannot start, approve and seal the same fit. ` +
  `An Owner other than you seals it; ${turnOff}.`;

/** True when `approverId` may approve a fit `starterId` started. Pure. */
export function mayApprove(
  secondPersonSignOff: boolean,
  starterId: string,
  approverId: string,
): boolean {
  return !secondPersonSignOff || approverId !== starterId;
}

/** True when `sealerId` may seal a fit `starterId` started and `approverId` approved. Pure. */
export function maySeal(
  secondPersonSignOff: boolean,
  starterId: string,
  approverId: string,
  sealerId: string,
): boolean {
  return !secondPersonSignOff || !isSinglePersonSignOff(starterId, approverId, sealerId);
}

/** True when one person started, approved and sealed the fit (what a seal records as `singlePersonSignOff`). Pure. */
export function isSinglePersonSignOff(
  starterId: string,
  approverId: string,
  sealerId: string,
): boolean {
  return starterId === approverId && approverId === sealerId;
}

/** A person as the publish panel names them. */
export interface SignOffPerson {
  id: string;
  name: string | null;
}

/** "you", the person's name, or `otherwise` when they have none. */
function named(person: SignOffPerson, viewerId: string | null, otherwise: string): string {
  if (viewerId !== null && person.id === viewerId) return "you";
  return person.name?.trim() || otherwise;
}

/** Who may approve next: "a Reviewer or Owner other than Tomas Ferreira" while the setting is on, else "a Reviewer or Owner". */
export function whoMayApprove(
  secondPersonSignOff: boolean,
  starter: SignOffPerson,
  viewerId: string | null,
): string {
  return secondPersonSignOff
    ? `a Reviewer or Owner other than ${named(starter, viewerId, "the person who started it")}`
    : "a Reviewer or Owner";
}

/** Who may seal next: "an Owner other than …" when the starter approved and the setting is on, else "an Owner". */
export function whoMaySeal(
  secondPersonSignOff: boolean,
  starter: SignOffPerson,
  approver: SignOffPerson,
  viewerId: string | null,
): string {
  return secondPersonSignOff && starter.id === approver.id
    ? `an Owner other than ${named(starter, viewerId, "the person who started and approved it")}`
    : "an Owner";
}

/** Said to the person who started a fit when the setting is off and they could sign it off alone (the publish panel). */
export const singlePersonWarning = `“${secondPersonSignOffLabel}” is off in this study: a fit one person starts, approves and seals says so on its seal and in its methods paragraph.`;

/** What the seal of a fit one person started, approved and sealed says (the publish panel). */
export const singlePersonSealNote = `One person started, approved and sealed this fit: the study's setting “${secondPersonSignOffLabel}” was off.`;

/** The Activity trail's words for turning the setting on or off ("turned off “A second person signs off”"). */
export function signOffSettingWords(on: boolean): string {
  return `turned ${on ? "on" : "off"} “${secondPersonSignOffLabel}”`;
}
