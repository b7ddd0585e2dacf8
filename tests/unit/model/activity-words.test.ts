/**
 * Activity sentences name who was acted on (the product's wording, common practice, no source).
 */
import { describe, expect, it } from "vitest";
import {
  fitApprovedWords,
  fitCancelledWords,
  fitSealedWords,
  memberRemovedWords,
  personWords,
  roleChangedWords,
} from "../../../contract/activity-words";

describe("activity words", () => {
  it("names a removed member and their role", () => {
    expect(
      memberRemovedWords({
        name: "Jonah Adeyemi",
        email: "viewer@demo.covarion.test",
        role: "viewer",
      }),
    ).toBe("removed Jonah Adeyemi (Viewer)");
    // An event recorded before names were kept: the e-mail address.
    expect(memberRemovedWords({ name: null, email: "guest@lab.example", role: "analyst" })).toBe(
      "removed guest@lab.example (Analyst)",
    );
    expect(personWords({ name: null, email: null })).toBe("a member");
  });

  it("names whose role changed, from what to what", () => {
    expect(roleChangedWords({ name: "Priya Raman", email: null, role: "reviewer" }, "owner")).toBe(
      "changed Priya Raman's role from Reviewer to Owner",
    );
  });

  it("names a fit by its model", () => {
    expect(fitApprovedWords("accuracy with age")).toBe(
      "approved the fit of ‘accuracy with age’ for sealing",
    );
    expect(fitCancelledWords(null)).toBe("cancelled a fit");
    expect(fitSealedWords("accuracy with age", "0123456789abcdef", false)).toBe(
      "sealed the fit of ‘accuracy with age’ (SHA-256 0123456789ab…)",
    );
    expect(fitSealedWords(null, "0123456789abcdef", true)).toBe(
      "sealed a fit (SHA-256 0123456789ab…) that they had also started and approved",
    );
  });
});
