import { describe, expect, it } from "vitest";
import {
  findIdentifierColumns,
  headerWords,
  identifierKindFromCells,
  identifierKindFromHeader,
  readTable,
} from "../../../server/intake";

describe("direct-identifier guard", () => {
  it("splits headers into words", () => {
    expect(headerWords("DateOfBirth")).toEqual(["date", "of", "birth"]);
    expect(headerWords("e-mail address")).toEqual(["e", "mail", "address"]);
    expect(headerWords("patientMRN")).toEqual(["patient", "mrn"]);
  });

  it.each([
    ["name", "name"],
    ["first_name", "name"],
    ["Surname", "name"],
    ["participantName", "name"],
    ["DOB", "birth-date"],
    ["date_of_birth", "birth-date"],
    ["BirthDate", "birth-date"],
    ["home_address", "address"],
    ["postcode", "address"],
    ["zip", "address"],
    ["phone", "phone"],
    ["mobile_number", "phone"],
    ["email", "email"],
    ["E-mail", "email"],
    ["MRN", "record-number"],
    ["medical_record_number", "record-number"],
    ["hospital_id", "record-number"],
    ["SSN", "record-number"],
  ])("header %s suggests %s", (header, kind) => {
    expect(identifierKindFromHeader(header)).toBe(kind);
  });

  it.each([
    "participant_id",
    "age",
    "sex",
    "group",
    "site_name",
    "birth_weight",
    "accuracy",
    "mean_fd",
    "handedness",
    "rt_ms",
  ])("header %s is not flagged", (header) => {
    expect(identifierKindFromHeader(header)).toBeNull();
  });

  it("recognises identifiers by content", () => {
    expect(identifierKindFromCells(["ann@example.org", "bo@lab.example", "n/a"])?.kind).toBe(
      "email",
    );
    expect(identifierKindFromCells(["1987-03-14", "1990-11-02"])?.kind).toBe("birth-date");
    expect(identifierKindFromCells(["14/03/1987", "2.11.1990"])?.kind).toBe("birth-date");
    expect(identifierKindFromCells(["+44 20 7946 0958", "(555) 010-0199"])?.kind).toBe("phone");
    expect(identifierKindFromCells(["12 Harbour Road", "7 Mill Lane"])?.kind).toBe("address");
    expect(identifierKindFromCells(["Ann Lee", "Bo Tan", "Cora Diaz"])?.kind).toBe("name");
  });

  it("does not flag numbers, decimals, repeated categories or ordinary ids by content", () => {
    expect(identifierKindFromCells(["0.4213567", "-12345678", "3e-4"])).toBeNull();
    expect(
      identifierKindFromCells(["Left Handed", "Left Handed", "Right Handed", "Left Handed"]),
    ).toBeNull();
    expect(identifierKindFromCells(["sub-001", "sub-002", "sub-003"])).toBeNull();
    expect(identifierKindFromCells(["patient", "control"])).toBeNull();
    expect(identifierKindFromCells([])).toBeNull();
  });

  it("flags the columns of a table with the reason, without quoting the values", () => {
    const t = readTable(
      "participant_id,age,contact,DOB\nsub-01,30,ann@example.org,1990-01-01\nsub-02,31,bo@example.org,1989-02-02\n",
      "participants.csv",
    );
    const flags = findIdentifierColumns(t);
    expect(flags).toEqual([
      { column: "contact", kind: "email", reason: "100% of the values look like e-mail addresses" },
      { column: "DOB", kind: "birth-date", reason: "the column name suggests birth dates" },
    ]);
  });
});
