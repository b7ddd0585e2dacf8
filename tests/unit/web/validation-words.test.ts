/**
 * Validation answers said as sentences without field paths. The inputs are
 * the server's own messages (server/routes/*.ts, server/http/validate.ts);
 * the expected sentences are the product's wording (common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { fieldName, validationSentence, validationWords } from "../../../hooks/validation-words";

describe("validationSentence", () => {
  it("asks for an e-mail address with an example", () => {
    expect(validationSentence({ field: "body.email", message: "must be an e-mail address" })).toBe(
      "Enter an e-mail address such as name@lab.example.",
    );
  });

  it("names the field in words before a 'must' message", () => {
    expect(
      validationSentence({ field: "body.name", message: "must be at most 200 characters" }),
    ).toBe("The name must be at most 200 characters.");
    expect(
      validationSentence({ field: "body.regionSelection", message: "must not be empty" }),
    ).toBe("The region selection must not be empty.");
  });

  it("keeps an instruction as it is, as a sentence", () => {
    expect(
      validationSentence({
        field: "body.reason",
        message: "give the reason for setting this participant aside",
      }),
    ).toBe("Give the reason for setting this participant aside.");
    expect(
      validationSentence({ field: "body.confirm", message: "type the study's name to confirm" }),
    ).toBe("Type the study's name to confirm.");
  });

  it("replaces a field name the message itself starts with", () => {
    expect(
      validationSentence({
        field: "body.groups.0.groupRatio",
        message: "groupRatio must be above 0",
      }),
    ).toBe("The group ratio must be above 0.");
  });

  it("says an address part is not valid without naming it", () => {
    expect(validationSentence({ field: "params.studyId", message: "must be an id" })).toBe(
      "The address of this page is not valid. Go back and open it again from the list.",
    );
  });

  it("never shows the field path", () => {
    const sentence = validationSentence({
      field: "body.spec.covariates.2",
      message: "Invalid input",
    });
    expect(sentence).toBe("Check the covariates: Invalid input.");
    expect(sentence).not.toContain("body.");
  });
});

describe("validationWords", () => {
  it("joins each sentence once", () => {
    expect(
      validationWords([
        { field: "body.email", message: "must be an e-mail address" },
        { field: "body.email", message: "must be at most 254 characters" },
        { field: "body.name", message: "must not be empty" },
      ]),
    ).toBe("Enter an e-mail address such as name@lab.example. The name must not be empty.");
  });

  it("is null when the details are not a list of field details", () => {
    expect(validationWords(undefined)).toBeNull();
    expect(validationWords([])).toBeNull();
    expect(validationWords({ problems: [] })).toBeNull();
    expect(validationWords([{ message: "x" }])).toBeNull();
  });

  it("skips list indexes and the request part in field names", () => {
    expect(fieldName("body.1.column")).toBe("the column");
    expect(fieldName("body")).toBe("this form");
    expect(fieldName("query.kind")).toBe("the kind");
  });
});
