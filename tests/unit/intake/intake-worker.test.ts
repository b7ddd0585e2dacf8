/**
 * The intake's worker thread and the stored form it builds: an upload's
 * preview, its rows as CSV chunks for the bulk load, and refusals that come
 * back as the IntakeError they were; the same answers as the intake library
 * gives on the calling thread.
 */
import { createHash } from "node:crypto";
import Papa from "papaparse";
import { afterAll, describe, expect, it } from "vitest";
import { IntakeError, confirmTable, previewUpload, readTable } from "../../../server/intake";
import { IntakeJobs } from "../../../server/jobs/intake-jobs";
import {
  CHUNK_BYTES,
  CHUNK_ROWS,
  STORED_ROW_COLUMNS,
  decodeNumbers,
  encodeNumbers,
  encodeVersion,
} from "../../../server/jobs/intake-rows";

const jobs = new IntakeJobs({ threads: 1 });
afterAll(async () => {
  await jobs.close();
});

/** The chunks of an encoded version as parsed CSV records. */
function chunks(encoded: { csv: Uint8Array; chunkEnds: number[] }): string[][][] {
  const out: string[][][] = [];
  let from = 0;
  for (const end of encoded.chunkEnds) {
    const text = new TextDecoder().decode(encoded.csv.subarray(from, end));
    out.push(
      Papa.parse<string[]>(text.replace(/\n$/, ""), { delimiter: ",", quoteChar: '"' }).data,
    );
    from = end;
  }
  return out;
}

const shared = (text: string) => {
  const bytes = new TextEncoder().encode(text);
  const view = new Uint8Array(new SharedArrayBuffer(bytes.byteLength));
  view.set(bytes);
  return view;
};

describe("the intake worker thread", () => {
  it("previews an upload from shared memory as the library does on this thread, with its SHA-256", async () => {
    const text = "participant_id,L_insula,L_insula_se\ns1,0.5,0.1\ns2,0.7,0.2\n";
    const { preview, sha256 } = await jobs.preview({
      bytes: shared(text),
      fileName: "brain.csv",
      kind: "brain",
      options: {},
    });
    expect(preview).toEqual(previewUpload(text, "brain.csv", "brain"));
    expect(sha256).toBe(createHash("sha256").update(text).digest("hex"));
  });

  it("gives a refusal back as the IntakeError it was, with status and every problem", async () => {
    const text = "participant_id,a\ns1,1\ns2,x\ns3,2\ns4,3\ns5,4\n";
    const refused = await jobs
      .preview({ bytes: shared(text), fileName: "brain.csv", kind: "brain", options: {} })
      .catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(IntakeError);
    expect(refused).toMatchObject({
      status: 422,
      problemCount: 1,
      problems: [{ file: "brain.csv", row: 3, column: "a", code: "not_a_number" }],
    });
    const empty = await jobs
      .preview({ bytes: shared(""), fileName: "brain.csv", kind: "brain", options: {} })
      .catch((e: unknown) => e);
    expect(empty).toMatchObject({ status: 400, problems: [{ code: "empty_file" }] });
  });

  it("builds the rows to store with the uploader's decisions", async () => {
    const text =
      "participant_id\tage\temail\nsub-01\t30\ta@example.org\nsub-02\tn/a\tb@example.org\n";
    const { encoded } = await jobs.encode({
      bytes: shared(text),
      fileName: "p.tsv",
      kind: "participants",
      confirmation: { dropColumns: ["email"] },
      datasetId: "d1",
    });
    expect(encoded).toMatchObject({
      delimiter: "\t",
      idColumn: "participant_id",
      dropped: ["email"],
      rowCount: 2,
      participantCount: 2,
    });
    expect(encoded.decisions).toEqual([{ column: "email", kind: "email", decision: "dropped" }]);
    expect(chunks(encoded)).toEqual([
      [
        ["d1", "0", "2", "sub-01", "", "30", "[]"],
        ["d1", "1", "3", "sub-02", "", "", "[]"],
      ],
    ]);
    expect(new TextDecoder().decode(encoded.csv)).not.toContain("example.org");
  });
});

describe("the stored rows as CSV chunks", () => {
  it("cuts chunks at CHUNK_ROWS rows, keeps positions in order, and writes NULL sessions unquoted", () => {
    const n = CHUNK_ROWS * 2 + 5;
    const text = `participant_id,session,a\n${Array.from({ length: n }, (_, i) => `s${i},1,${i / 10}`).join("\n")}\n`;
    const raw = readTable(text, "brain.csv");
    const encoded = encodeVersion("v", raw, confirmTable(raw, "brain"));
    const parsed = chunks(encoded);
    expect(parsed.map((c) => c.length)).toEqual([CHUNK_ROWS, CHUNK_ROWS, 5]);
    const all = parsed.flat();
    expect(all.map((r) => Number(r[1]))).toEqual(Array.from({ length: n }, (_, i) => i));
    expect(all[7]).toEqual(["v", "7", "9", "s7", "1", "0.7", "[]"]);
    expect(STORED_ROW_COLUMNS).toHaveLength(all[0].length);
    // A session-less table writes its sessions as NULL: an empty field without quotes.
    const plain = readTable("participant_id,a\ns1,1\n", "b.csv");
    expect(
      new TextDecoder().decode(encodeVersion("v", plain, confirmTable(plain, "brain")).csv),
    ).toBe('"v",0,2,"s1",,"1","[]"\n');
  });

  it("keeps a chunk near CHUNK_BYTES when rows are wide", () => {
    const regions = 400;
    const header = ["participant_id", ...Array.from({ length: regions }, (_, r) => `r${r}`)].join(
      ",",
    );
    const rows = Array.from({ length: 300 }, (_, i) =>
      [`s${i}`, ...Array.from({ length: regions }, (_, r) => ((i * r) / 7).toFixed(6))].join(","),
    );
    const raw = readTable(`${header}\n${rows.join("\n")}\n`, "wide.csv");
    const encoded = encodeVersion("v", raw, confirmTable(raw, "brain"));
    let from = 0;
    for (const end of encoded.chunkEnds) {
      expect(end - from).toBeLessThanOrEqual(CHUNK_BYTES + 10_000); // one row of ~4 kB may cross the line
      from = end;
    }
    expect(encoded.chunkEnds.length).toBeGreaterThan(1);
    expect(chunks(encoded).flat()).toHaveLength(300);
  });

  it("numbers round-trip exactly through their stored text, missing stays missing", () => {
    const values = [0.1, -0, 1e-300, 123456789.12345679, Number.NaN, -2.5e21, 5e-324];
    const back = decodeNumbers(encodeNumbers(values), values.length);
    expect(Array.from(back)).toEqual([
      0.1,
      0,
      1e-300,
      123456789.12345679,
      Number.NaN,
      -2.5e21,
      5e-324,
    ]);
    expect(encodeNumbers([Number.NaN, Number.NaN])).toBe(",");
  });
});
