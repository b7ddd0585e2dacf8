/**
 * The results sentences of a done fit, one per region, written by the
 * reporting rules of contract/results-sentences.ts (the server sends them
 * as runs): statistic symbols in italics, subscripts smaller, a Copy button
 * beside each sentence (plain text, no marks) and one for all of them. Long
 * fits show the first regions and a button for the rest.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { Button, Failure, Pending, Txt } from "../ui";
import { palette, radius, space, type } from "../theme";
import { copyText } from "./clipboard";
import { type ResultsSentenceView, useFitSentences } from "../../hooks/use-fit-exports";

/** How many sentences show before "Show all". */
const FIRST = 6;

export function ResultsSentences({ fitId, enabled }: { fitId: string; enabled: boolean }) {
  const sentences = useFitSentences(fitId, enabled);
  const [open, setOpen] = useState(false);
  const [copied, setCopied] = useState<{ key: string; message: string } | null>(null);
  if (!enabled) return null;
  if (sentences.isPending) return <Pending label="Writing the results sentences…" />;
  if (sentences.isError)
    return (
      <Failure
        error={sentences.error}
        onRetry={() => sentences.refetch()}
        title="The results sentences could not be written"
      />
    );
  const list = sentences.data;
  if (list.length === 0) return null;
  const shown = open ? list : list.slice(0, FIRST);
  const copy = async (key: string, text: string) => {
    try {
      const outcome = await copyText(text);
      setCopied({ key, message: outcome === "copied" ? "Copied." : "Shared." });
    } catch (e) {
      setCopied({
        key,
        message:
          e instanceof Error ? e.message : "Copying did not work; select the text and copy it.",
      });
    }
  };
  const all = list.map((s) => `${s.region}: ${s.text}`).join("\n");
  return (
    <View style={styles.root} testID="results-sentences">
      <View style={styles.head}>
        <Txt kind="label">Results sentences</Txt>
        <Button
          label="Copy all"
          variant="secondary"
          onPress={() => void copy("all", all)}
          testID="copy-all-sentences"
        />
      </View>
      {copied?.key === "all" ? (
        <Txt kind="caption" accessibilityRole="alert" testID="copy-all-outcome">
          {copied.message}
        </Txt>
      ) : null}
      {shown.map((s, k) => (
        <SentenceRow
          key={s.region}
          sentence={s}
          index={k}
          outcome={copied?.key === s.region ? copied.message : null}
          onCopy={() => void copy(s.region, s.text)}
        />
      ))}
      {list.length > FIRST ? (
        <Button
          label={open ? "Show fewer" : `Show all ${list.length}`}
          variant="quiet"
          onPress={() => setOpen(!open)}
          testID="toggle-sentences"
        />
      ) : null}
    </View>
  );
}

function SentenceRow(props: {
  sentence: ResultsSentenceView;
  index: number;
  outcome: string | null;
  onCopy: () => void;
}) {
  const { sentence, index } = props;
  return (
    <View style={styles.row} testID={`sentence-${index}`}>
      <View style={styles.words}>
        <Txt kind="small" style={styles.region} selectable>
          {sentence.region}
        </Txt>
        <Txt selectable testID={`sentence-text-${index}`}>
          {sentence.runs
            .map((r, k) => ({ ...r, id: `run-${k}` }))
            .map((r) => (
              <Txt
                key={r.id}
                style={[r.italic ? styles.italic : null, r.script ? styles.script : null]}
              >
                {r.text}
              </Txt>
            ))}
        </Txt>
        {props.outcome ? (
          <Txt kind="caption" accessibilityRole="alert">
            {props.outcome}
          </Txt>
        ) : null}
      </View>
      <Button
        label="Copy"
        variant="secondary"
        onPress={props.onCopy}
        accessibilityLabel={`Copy the sentence of ${sentence.region}`}
        testID={`copy-sentence-${index}`}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
  head: {
    flexDirection: "row",
    flexWrap: "wrap",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  row: {
    flexDirection: "row",
    flexWrap: "wrap",
    alignItems: "center",
    gap: space.sm,
    backgroundColor: palette.canvas,
    borderRadius: radius.md,
    borderWidth: 1,
    borderColor: palette.line,
    padding: space.sm,
  },
  words: { flexGrow: 1, flexShrink: 1, flexBasis: 220, minWidth: 0, gap: 2 },
  region: { color: palette.muted },
  italic: { fontStyle: "italic" },
  script: { fontSize: type.caption },
});
