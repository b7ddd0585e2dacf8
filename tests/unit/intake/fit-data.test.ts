import { describe, expect, it } from "vitest";
import {
  IntakeError,
  buildBrainTable,
  buildFitData,
  buildParticipantSheet,
  readTable,
} from "../../../server/intake";

const brain = (t: string) => buildBrainTable(readTable(t, "brain.csv"));
const sheet = (t: string) => buildParticipantSheet(readTable(t, "participants.tsv"));

describe("buildFitData", () => {
  it("aligns matched participants in brain-table order with their sheet rows", () => {
    const b = brain(
      "participant_id,a,a_se,b\nsub-03,3,0.3,30\nsub-01,1,0.1,10\nsub-02,2,0.2,20\nsub-09,9,0.9,90\n",
    );
    const s = sheet(
      "participant_id\tage\tgroup\nsub-01\t21\tcontrol\n02\t22\tpatient\nsub-03\tn/a\tcontrol\nsub-04\t24\tpatient\n",
    );
    const { data, roster, session, sheetIds } = buildFitData(b, s);
    expect(data.participants).toEqual(["sub-03", "sub-01", "sub-02"]);
    expect(sheetIds).toEqual(["sub-03", "sub-01", "02"]);
    expect(data.regions).toEqual(["a", "b"]);
    expect(Array.from(data.values[0])).toEqual([3, 1, 2]);
    expect(Array.from(data.values[1])).toEqual([30, 10, 20]);
    expect(Array.from(data.standardErrors![0]!)).toEqual([0.3, 0.1, 0.2]);
    expect(data.standardErrors![1]).toBeNull();
    expect(data.numericColumns).toEqual({ age: [null, 21, 22] });
    expect(data.categoricalColumns).toEqual({ group: ["control", "control", "patient"] });
    expect(roster?.onlyInBrainTable).toEqual(["sub-09"]);
    expect(roster?.onlyInParticipantSheet).toEqual(["sub-04"]);
    expect(session).toBeNull();
    expect(data.sessions).toBeUndefined();
  });

  it("without a sheet takes every brain participant", () => {
    const { data, roster } = buildFitData(brain("participant_id,a\ns1,1\ns2,2\n"), null);
    expect(data.participants).toEqual(["s1", "s2"]);
    expect(roster).toBeNull();
    expect(data.standardErrors).toBeUndefined();
    expect(data.numericColumns).toEqual({});
  });

  it("puts one session in values and all sessions in sessions", () => {
    const b = brain("participant_id,session,a\ns1,2,1.2\ns1,10,1.10\ns2,2,2.2\ns3,10,3.10\n");
    const first = buildFitData(b, null);
    expect(first.session).toBe("2"); // natural order: 2 before 10
    expect(first.data.participants).toEqual(["s1", "s2", "s3"]);
    expect(Array.from(first.data.values[0])).toEqual([1.2, 2.2, Number.NaN]);
    expect(first.data.sessions?.labels).toEqual(["2", "10"]);
    expect(first.data.sessions?.values[0].map((v) => Array.from(v))).toEqual([
      [1.2, 2.2, Number.NaN],
      [1.1, Number.NaN, 3.1],
    ]);
    expect(Array.from(buildFitData(b, null, { session: "10" }).data.values[0])).toEqual([
      1.1,
      Number.NaN,
      3.1,
    ]);
    expect(() => buildFitData(b, null, { session: "3" })).toThrow(IntakeError);
  });

  it("refuses a join with no match, and passes mappings through", () => {
    const b = brain("participant_id,a\n7,1\n");
    const s = sheet("participant_id,age\n07,30\n");
    expect(() => buildFitData(b, s)).toThrow(/no participant of the brain table matches/);
    const { data } = buildFitData(b, s, { mappings: [{ brainId: "7", sheetId: "07" }] });
    expect(data.participants).toEqual(["7"]);
    expect(data.numericColumns).toEqual({ age: [30] });
  });
});
