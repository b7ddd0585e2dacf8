/**
 * A done fit's hand-over to a paper: where it stands (approved, sealed with
 * its hash) and who may act next, the approve and seal actions for those
 * whose role and the study's "A second person signs off" allow them (the
 * person the setting stops sees why instead of the button), downloads of
 * the region table (CSV, and Markdown, LaTeX and Word tables for a
 * manuscript) and the recipe, the results sentences with a Copy button each
 * (results-sentences.tsx) — table and sentences only for a fit with region
 * rows, not a prediction or a curve — and the methods paragraph with its references
 * and a Copy button.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { DownloadLink } from "../datasets/download-link";
import { Badge, Button, Failure, Heading, Notice, Pending, Txt } from "../ui";
import { fonts, palette, radius, space, type } from "../theme";
import { copyText } from "./clipboard";
import { publishState } from "./publish-state";
import { ResultsSentences } from "./results-sentences";
import { ReportDownload } from "./report-download";
import { useMe } from "../../hooks/use-me";
import { can, useStudy } from "../../hooks/use-study";
import type { FitView } from "../../hooks/use-fits";
import {
  fitDownloads,
  useApproveFit,
  useFitMethods,
  useSealFit,
  type MethodsText,
} from "../../hooks/use-fit-exports";

export function PublishPanel({ fit }: { fit: FitView }) {
  const study = useStudy(fit.studyId);
  const me = useMe();
  const done = fit.status === "done";
  const methods = useFitMethods(fit.id, done);
  const approve = useApproveFit(fit.id, fit.studyId);
  const seal = useSealFit(fit.id, fit.studyId);
  if (!done) return null;
  const state = publishState(
    fit,
    {
      approve: can(study.data, "fits.approve"),
      seal: can(study.data, "fits.seal"),
      id: me.data?.id ?? null,
    },
    { secondPersonSignOff: study.data?.secondPersonSignOff ?? true },
    (iso) => new Date(iso).toLocaleString(),
  );
  const downloads = fitDownloads(fit.id);
  // A prediction or a specification curve has no region rows: no region table and no sentences.
  const hasRegions = ((fit.result?.regions as unknown[] | undefined)?.length ?? 0) > 0;
  const actionError = approve.error ?? seal.error;
  return (
    <View style={styles.root} testID="publish-panel">
      <View style={styles.statusRow}>
        <Heading level={3}>For the paper</Heading>
        {state.stage === "sealed" && state.hash ? (
          <View
            style={styles.sealed}
            testID="sealed-badge"
            accessibilityLabel={`Sealed, SHA-256 ${state.hash.full}`}
          >
            <Badge label="Sealed" tone="success" />
            <Txt kind="mono" style={styles.hash} selectable>
              {state.hash.short}…
            </Txt>
          </View>
        ) : state.stage === "approved" ? (
          <Badge label="Approved" tone="accent" />
        ) : null}
      </View>
      <Txt kind="small" testID="publish-status">
        {state.line}
      </Txt>
      {state.stage === "sealed" && state.hash ? (
        <Txt kind="caption" style={styles.fullHash} selectable testID="seal-hash">
          SHA-256 of the recipe and result: {state.hash.full}
        </Txt>
      ) : null}
      <ReportDownload fit={fit} />
      {state.signOffNote ? (
        <Txt kind="caption" style={styles.hint} testID="single-person-sign-off">
          {state.signOffNote}
        </Txt>
      ) : null}
      {state.broken ? (
        <Notice tone="danger" title="The seal does not match">
          The stored recipe or result no longer hashes to the seal's SHA-256. Report this to the
          study's Owner.
        </Notice>
      ) : null}
      {actionError ? <Notice tone="danger">{actionError.message}</Notice> : null}
      {state.refusal ? (
        <Notice tone="caution" title="A second person signs off" testID="sign-off-refusal">
          {state.refusal}
        </Notice>
      ) : null}
      {state.canApprove || state.canSeal || state.hint ? (
        <View style={styles.actions}>
          {state.canApprove ? (
            <Button
              label="Approve for sealing"
              onPress={() => approve.mutate()}
              busy={approve.isPending}
              testID="approve-fit"
            />
          ) : null}
          {state.canSeal ? (
            <Button
              label="Seal this fit"
              onPress={() => seal.mutate()}
              busy={seal.isPending}
              testID="seal-fit"
            />
          ) : null}
          {state.hint ? (
            <Txt kind="caption" style={styles.hint}>
              {state.hint}
            </Txt>
          ) : null}
        </View>
      ) : null}
      <View style={styles.actions}>
        {hasRegions ? (
          <>
            <DownloadLink
              label="Region table (CSV)"
              href={downloads.regionsCsv}
              testID="download-regions"
            />
            <DownloadLink
              label="Table (Markdown)"
              href={downloads.regionsMd}
              testID="download-regions-md"
            />
            <DownloadLink
              label="Table (LaTeX)"
              href={downloads.regionsTex}
              testID="download-regions-tex"
            />
            <DownloadLink
              label="Table (Word)"
              href={downloads.regionsDocx}
              testID="download-regions-docx"
            />
          </>
        ) : null}
        {fit.participantsVisible ? (
          <DownloadLink
            label="Recipe (JSON)"
            href={downloads.recipeJson}
            testID="download-recipe"
          />
        ) : null}
      </View>
      <ResultsSentences fitId={fit.id} enabled={done && hasRegions} />
      {methods.isPending ? <Pending label="Writing the methods paragraph…" /> : null}
      {methods.isError ? (
        <Failure
          error={methods.error}
          onRetry={() => methods.refetch()}
          title="The methods paragraph could not be written"
        />
      ) : null}
      {methods.data ? <MethodsBlock methods={methods.data} /> : null}
    </View>
  );
}

function MethodsBlock({ methods }: { methods: MethodsText }) {
  const [open, setOpen] = useState(false);
  const [copied, setCopied] = useState<string | null>(null);
  const copy = async () => {
    try {
      const outcome = await copyText(methods.text);
      setCopied(outcome === "copied" ? "Copied." : "Shared.");
    } catch (e) {
      setCopied(
        e instanceof Error
          ? e.message
          : "Copying did not work; select the paragraph and copy it by hand.",
      );
    }
  };
  return (
    <View style={styles.methods}>
      <View style={styles.statusRow}>
        <Txt kind="label">Methods paragraph</Txt>
        <View style={styles.actions}>
          <Button
            label="Copy"
            variant="secondary"
            onPress={() => void copy()}
            testID="copy-methods"
          />
          <Button
            label={open ? "Show less" : "Show all"}
            variant="quiet"
            onPress={() => setOpen(!open)}
            testID="toggle-methods"
          />
        </View>
      </View>
      {copied ? (
        <Txt kind="caption" accessibilityRole="alert" testID="copy-outcome">
          {copied}
        </Txt>
      ) : null}
      <View style={styles.paragraph}>
        <Txt
          selectable
          numberOfLines={open ? undefined : 4}
          testID="methods-text"
          style={styles.paragraphText}
        >
          {methods.text}
        </Txt>
      </View>
      {open ? (
        <View style={styles.references} testID="methods-references">
          <Txt kind="label">References</Txt>
          {methods.references.map((r) => (
            <Txt key={r.key} kind="small" selectable style={styles.reference}>
              {r.citation}
            </Txt>
          ))}
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: {
    gap: space.sm,
    borderTopWidth: 1,
    borderTopColor: palette.line,
    paddingTop: space.md,
    marginTop: space.xs,
  },
  statusRow: {
    flexDirection: "row",
    flexWrap: "wrap",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  sealed: { flexDirection: "row", alignItems: "center", gap: space.xs },
  hash: { fontSize: type.caption, color: palette.success },
  fullHash: { color: palette.muted, fontFamily: fonts.mono },
  actions: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  hint: { color: palette.muted, flexShrink: 1 },
  methods: { gap: space.sm },
  paragraph: {
    backgroundColor: palette.canvas,
    borderRadius: radius.md,
    borderWidth: 1,
    borderColor: palette.line,
    padding: space.md,
  },
  paragraphText: { lineHeight: 22 },
  references: { gap: space.xs },
  reference: { color: palette.inkSoft, paddingLeft: space.md },
});
