/**
 * One region of a finished fit: the data plot (scatter with the fitted line
 * and band, or a strip plot per group), who moves the estimate (Cook's
 * distance, leverage and residual against the flags' cut-offs), the
 * participant diagnostics table (paged from the API), the with-and-without
 * sensitivity, the permutation null distribution, and set-aside with an
 * at-once preview. A tapped participant's card shows their values with the
 * individual caution and either the set-aside form or, for someone already
 * set aside from this region or every region, who set them aside, when and
 * why, with Restore. A region with few participants gets the small-sample
 * caution.
 */
import { type ReactNode, useState } from "react";
import { StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { ScatterPlot } from "../charts/scatter-plot";
import { StripPlot } from "../charts/strip-plot";
import { InfluenceView } from "../charts/influence-view";
import { NullHistogram } from "../charts/null-histogram";
import { formatInterval, formatValue } from "../charts/number-format";
import { pPhrase } from "./p-text";
import { AttenuationNote } from "./attenuation-note";
import type { AttenuationInput } from "./attenuation-words";
import { ParticipantDiagnosticsTable } from "./participant-diagnostics-table";
import { FigureDownloads } from "./figure-downloads";
import { figureName } from "../../contract/views/figures";
import {
  dataPlotKind,
  influenceInputOf,
  influenceNote,
  influenceTitle,
  nullHistogramInputOf,
  nullHistogramTitle,
  scatterInputOf,
  stripInputOf,
} from "./region-plot-inputs";
import { Choice } from "../choice";
import { Badge, Button, Card, Failure, Field, Heading, Notice, Pending, Txt } from "../ui";
import { palette, space } from "../theme";
import {
  useRegionDetail,
  useRegionPreview,
  useRunFit,
  type FitView,
  type RegionDetail,
} from "../../hooks/use-fits";
import { useSetAside, useSetAsides, type SetAsideView } from "../../hooks/use-set-asides";
import { RestoreForm } from "../set-asides/restore-form";
import {
  individualCaution,
  regionSmallSampleCaution,
  setAsideCaution,
  smallSampleTitle,
} from "../../contract/cautions";
import { setAsideLine } from "../../contract/set-aside-words";
import { mutateThen } from "../../hooks/mutate-then";

type Point = NonNullable<RegionDetail["points"]>[number];

export function RegionDetailPanel(props: {
  fit: FitView;
  region: string;
  canSetAside: boolean;
  canRun: boolean;
  /** Lay the parts out in two balanced columns (a wide screen); one column otherwise. */
  columns?: boolean;
  /** Shown beside the region's name (e.g. a way back to the table). */
  heading?: ReactNode;
}) {
  const detail = useRegionDetail(props.fit.id, props.region, true);
  const [selected, setSelected] = useState<string | null>(null);
  if (detail.isPending) return <Pending label={`Loading ${props.region}…`} />;
  if (detail.isError) return <Failure error={detail.error} onRetry={() => detail.refetch()} />;
  const d = detail.data;
  const point = d.points?.find((p) => p.participant === selected) ?? null;
  const smallSample = regionSmallSampleCaution(d.n);
  const nullInput = nullHistogramInputOf(d);
  const top = (
    <>
      <View style={styles.title}>
        <Heading level={2} style={styles.name}>
          {d.region}
        </Heading>
        {props.heading}
      </View>
      <Summary detail={d} />
      {smallSample ? (
        <Notice tone="caution" title={smallSampleTitle} testID="region-small-sample">
          {smallSample}
        </Notice>
      ) : null}
    </>
  );
  const plots = (
    <>
      {d.points ? (
        <DataPlot detail={d} selected={selected} onSelect={setSelected} />
      ) : (
        <Notice>
          This study restricts participant-level rows: the plots are not shown to Viewers.
        </Notice>
      )}
      {point ? (
        <ParticipantCard
          key={point.participant}
          fit={props.fit}
          detail={d}
          point={point}
          canSetAside={props.canSetAside}
          onClose={() => setSelected(null)}
        />
      ) : null}
      <PreviewCard
        fit={props.fit}
        region={d.region}
        canRun={props.canRun}
        enabled={props.canSetAside}
      />
    </>
  );
  const checks = (
    <>
      {d.points && d.kind !== "reliability" ? (
        <InfluenceCard detail={d} selected={selected} onSelect={setSelected} />
      ) : null}
      <Sensitivity detail={d} />
      {d.result.attenuation ? (
        <Card>
          <Heading level={3}>Reliability and the largest observable correlation</Heading>
          <AttenuationNote
            attenuation={d.result.attenuation as AttenuationInput}
            testID="attenuation-note"
          />
        </Card>
      ) : null}
      {nullInput ? (
        <Card>
          <Heading level={3}>{nullHistogramTitle}</Heading>
          <NullHistogram {...nullInput} testID="null-histogram" />
          <FigureDownloads
            fitId={d.fitId}
            name={figureName(d.region, "null")}
            label={`null distribution of ${d.region}`}
          />
        </Card>
      ) : null}
    </>
  );
  return (
    <View style={styles.root} testID="region-detail">
      {top}
      {props.columns ? (
        <View style={styles.columns}>
          <View style={styles.column}>{plots}</View>
          <View style={styles.column}>{checks}</View>
        </View>
      ) : (
        <>
          {plots}
          {checks}
        </>
      )}
      {d.points ? (
        <ParticipantDiagnosticsTable
          fitId={props.fit.id}
          region={d.region}
          selected={selected}
          onSelect={setSelected}
        />
      ) : null}
      {d.notes.length > 0 ? (
        <Txt kind="caption" style={{ color: palette.muted }}>
          {d.notes.join(" ")}
        </Txt>
      ) : null}
    </View>
  );
}

function InfluenceCard({
  detail,
  selected,
  onSelect,
}: {
  detail: RegionDetail;
  selected: string | null;
  onSelect: (id: string) => void;
}) {
  const influence = influenceInputOf(detail);
  return (
    <Card testID="influence-card">
      <Heading level={3}>{influenceTitle}</Heading>
      {influence ? (
        <>
          <InfluenceView
            points={influence.points}
            cuts={influence.cuts}
            selectedId={selected}
            onPointPress={onSelect}
            testID="influence-view"
          />
          <Txt kind="caption">{influenceNote}</Txt>
          <FigureDownloads
            fitId={detail.fitId}
            name={figureName(detail.region, "influence")}
            label={`influence view of ${detail.region}`}
          />
        </>
      ) : (
        <Notice>
          This fit was run before its flag cut-offs were kept with it; run it again to see who moves
          the estimate.
        </Notice>
      )}
    </Card>
  );
}

function Summary({ detail }: { detail: RegionDetail }) {
  const r = detail.result;
  const ci = r.ciLow !== null && r.ciHigh !== null ? formatInterval(r.ciLow, r.ciHigh) : "n/a";
  return (
    <Card>
      <Txt testID="region-summary">
        Estimate {formatValue(r.estimate)} (95% CI {ci}),{" "}
        {r.statistic !== null ? `statistic ${formatValue(r.statistic)}, ` : ""}
        {r.df !== null ? `df ${formatValue(r.df, 4)}, ` : ""}
        {pPhrase(r.p)}, adjusted {pPhrase(r.pAdjusted)}, N = {r.n}.
      </Txt>
      {typeof r.r === "number" ? (
        <Txt kind="small" style={{ color: palette.inkSoft }}>
          r = {formatValue(r.r)}
          {typeof r.rCiLow === "number" && typeof r.rCiHigh === "number"
            ? ` (95% CI ${formatInterval(r.rCiLow, r.rCiHigh)})`
            : ""}
          . With {r.n} participants the interval, not p alone, shows how uncertain this correlation
          is.
        </Txt>
      ) : null}
      <View style={styles.badges}>
        <Badge
          label={`${detail.flagCounts.outlier} outlier`}
          tone={detail.flagCounts.outlier ? "danger" : "neutral"}
        />
        <Badge
          label={`${detail.flagCounts.leverage} leverage`}
          tone={detail.flagCounts.leverage ? "accent" : "neutral"}
        />
        <Badge
          label={`${detail.flagCounts.influence} influence`}
          tone={detail.flagCounts.influence ? "accent" : "neutral"}
        />
      </View>
    </Card>
  );
}

function DataPlot({
  detail,
  selected,
  onSelect,
}: {
  detail: RegionDetail;
  selected: string | null;
  onSelect: (id: string) => void;
}) {
  if (dataPlotKind(detail) === "scatter") {
    const scatter = scatterInputOf(detail);
    return (
      <Card>
        <Heading level={3}>{scatter.title}</Heading>
        <ScatterPlot
          {...scatter.input}
          selectedId={selected}
          onPointPress={onSelect}
          testID="scatter-plot"
        />
        <Txt kind="caption">{scatter.note}</Txt>
        <FigureDownloads
          fitId={detail.fitId}
          name={figureName(detail.region, "scatter")}
          label={`scatter plot of ${detail.region}`}
        />
      </Card>
    );
  }
  const strip = stripInputOf(detail);
  return (
    <Card>
      <Heading level={3}>{strip.title}</Heading>
      <StripPlot
        {...strip.input}
        selectedId={selected}
        onPointPress={onSelect}
        testID="strip-plot"
      />
      <Txt kind="caption">{strip.note}</Txt>
      <FigureDownloads
        fitId={detail.fitId}
        name={figureName(detail.region, "strip")}
        label={`strip plot of ${detail.region}`}
      />
    </Card>
  );
}

/** The study's active set-aside that leaves this participant out of this region (every region first), if any. */
function currentSetAside(
  list: readonly SetAsideView[] | undefined,
  participant: string,
  region: string,
): SetAsideView | null {
  const mine = (list ?? []).filter((s) => s.active && s.participant === participant);
  return mine.find((s) => s.region === null) ?? mine.find((s) => s.region === region) ?? null;
}

function ParticipantCard({
  fit,
  detail,
  point,
  canSetAside,
  onClose,
}: {
  fit: FitView;
  detail: RegionDetail;
  point: Point;
  canSetAside: boolean;
  onClose: () => void;
}) {
  const [reason, setReason] = useState("");
  const [scope, setScope] = useState<"region" | "all">("region");
  const [restored, setRestored] = useState(false);
  const setAside = useSetAside(fit.studyId);
  const studySetAsides = useSetAsides(fit.studyId);
  const inFit = detail.setAside?.find((s) => s.participant === point.participant);
  const current = currentSetAside(studySetAsides.data, point.participant, detail.region);
  const elsewhere = (studySetAsides.data ?? []).filter(
    (s) =>
      s.active &&
      s.participant === point.participant &&
      s.region !== null &&
      s.region !== detail.region,
  );
  return (
    <Card testID="participant-card">
      <View style={styles.badges}>
        <Heading level={3}>{point.participant}</Heading>
        {point.flags.map((f) => (
          <Badge key={f} label={f} tone="danger" />
        ))}
        {current ? (
          <Badge
            label={current.region === null ? "Set aside: all regions" : "Set aside: this region"}
            tone="accent"
          />
        ) : null}
      </View>
      <Txt kind="small">
        {detail.axes.x ? `${detail.axes.x} ${formatValue(point.x)} · ` : ""}
        {point.group ? `${detail.axes.group ?? "group"} ${point.group} · ` : ""}contrast{" "}
        {formatValue(point.y)} · leverage {formatValue(point.leverage)} · studentized residual{" "}
        {formatValue(point.studentizedResidual)} · Cook's distance{" "}
        {formatValue(point.cooksDistance)}
      </Txt>
      <Txt kind="caption" style={{ color: palette.muted }} testID="individual-caution">
        {individualCaution}
      </Txt>
      {inFit ? (
        <Notice>
          Set aside in this fit ({inFit.scope}): {inFit.reason}
        </Notice>
      ) : null}
      {restored && !current ? (
        <Notice tone="success">
          Restored and logged. Refit to bring this participant back into every region's numbers.
        </Notice>
      ) : null}
      {setAside.isSuccess && current ? (
        <Notice tone="success">
          Set aside and logged. The estimate below is recomputed without this participant; refit to
          update every region.
        </Notice>
      ) : null}
      {current ? (
        <>
          <Notice
            tone="caution"
            title={
              current.region === null
                ? "Set aside from every region"
                : `Set aside from ${current.region}`
            }
            testID="participant-set-aside"
          >
            {setAsideLine(current)}
          </Notice>
          {canSetAside ? (
            <RestoreForm
              studyId={fit.studyId}
              setAside={current}
              onRestored={() => {
                setAside.reset();
                setRestored(true);
              }}
            />
          ) : null}
        </>
      ) : studySetAsides.isPending ? (
        <Pending label="Checking set-asides…" />
      ) : canSetAside ? (
        <>
          {elsewhere.length > 0 ? (
            <Txt kind="small" style={{ color: palette.inkSoft }}>
              Also set aside from {elsewhere.map((s) => s.region).join(", ")}.
            </Txt>
          ) : null}
          <Notice tone="caution">{setAsideCaution}</Notice>
          <Choice
            label="Set aside from"
            options={[
              { value: "region", label: `This region (${detail.region})` },
              { value: "all", label: "Every region" },
            ]}
            value={scope}
            onChange={setScope}
          />
          <Field
            label="Reason (required)"
            value={reason}
            onChangeText={setReason}
            placeholder="e.g. mean framewise displacement above the preregistered 0.5 mm"
            testID="set-aside-reason"
          />
          {setAside.error ? <Notice tone="danger">{setAside.error.message}</Notice> : null}
          <Button
            label="Set aside"
            variant="danger"
            disabled={reason.trim().length === 0}
            busy={setAside.isPending}
            onPress={() =>
              setAside.mutate(
                {
                  participant: point.participant,
                  region: scope === "region" ? detail.region : undefined,
                  reason: reason.trim(),
                },
                {
                  onSuccess: () => {
                    setReason("");
                    setRestored(false);
                  },
                },
              )
            }
            testID="set-aside"
          />
        </>
      ) : null}
      <Button label="Close" variant="quiet" onPress={onClose} />
    </Card>
  );
}

function PreviewCard({
  fit,
  region,
  canRun,
  enabled,
}: {
  fit: FitView;
  region: string;
  canRun: boolean;
  enabled: boolean;
}) {
  const setAsides = useSetAsides(fit.studyId, enabled);
  const version = (setAsides.data ?? []).map((s) => `${s.id}:${s.restoredAt ?? ""}`).join(",");
  const preview = useRegionPreview(fit.id, region, version, enabled && setAsides.isSuccess);
  const run = useRunFit(fit.studyId);
  const router = useRouter();
  if (!enabled || !preview.data) return null;
  const changed = preview.data.changes.added + preview.data.changes.restored > 0;
  if (!changed) return null;
  const p = preview.data.preview;
  return (
    <Card testID="region-preview">
      <Heading level={3}>With the current set-asides</Heading>
      <Txt>
        Estimate {formatValue(p.estimate)} (95% CI {formatValue(p.ciLow)} to {formatValue(p.ciHigh)}
        ), {pPhrase(p.p)}, N = {p.n}
        {preview.data.fit
          ? ` — this fit had ${formatValue(preview.data.fit.estimate)} with N = ${preview.data.fit.n}`
          : ""}
        .
      </Txt>
      <Txt kind="caption">
        Parametric, this region only. A refit recomputes every region with the model's own inference
        and correction; this fit stays as it is.
      </Txt>
      {run.error ? <Notice tone="danger">{run.error.message}</Notice> : null}
      {canRun ? (
        <Button
          label="Refit every region"
          onPress={() =>
            mutateThen(run, fit.model.id, (next) =>
              router.push(`/studies/${fit.studyId}/fits/${next.id}`),
            )
          }
          busy={run.isPending}
          testID="refit"
        />
      ) : null}
    </Card>
  );
}

function Sensitivity({ detail }: { detail: RegionDetail }) {
  const s = detail.sensitivity as {
    excluded: string[];
    n: number;
    estimate?: number;
    p?: number;
    ciLow?: number | null;
    ciHigh?: number | null;
    error?: string;
  } | null;
  const loo = detail.leaveOneOut as {
    estimateMin: number;
    estimateMax: number;
    minWithout: string;
    maxWithout: string;
    rMin?: number;
    rMax?: number;
  } | null;
  if (!s && !loo) return null;
  return (
    <Card testID="sensitivity">
      <Heading level={3}>With and without</Heading>
      {s ? (
        s.error ? (
          <Txt kind="small">
            Without the {s.excluded.length} flagged participants the estimate could not be computed:{" "}
            {s.error}.
          </Txt>
        ) : (
          <Txt kind="small">
            Without the {s.excluded.length} participant{s.excluded.length === 1 ? "" : "s"} flagged
            outlier or influence ({detail.points ? s.excluded.join(", ") : "ids withheld"}):
            estimate {formatValue(s.estimate)} (95% CI {formatValue(s.ciLow)} to{" "}
            {formatValue(s.ciHigh)}), {pPhrase(s.p)}, N = {s.n}; with them{" "}
            {formatValue(detail.result.estimate)}, {pPhrase(detail.result.p)}.
          </Txt>
        )
      ) : (
        <Txt kind="small">No participant is flagged outlier or influence in this region.</Txt>
      )}
      {loo ? (
        <Txt kind="small">
          Leaving one participant out moves the estimate between {formatValue(loo.estimateMin)} and{" "}
          {formatValue(loo.estimateMax)}
          {typeof loo.rMin === "number" && typeof loo.rMax === "number"
            ? ` (r between ${formatValue(loo.rMin)} and ${formatValue(loo.rMax)})`
            : ""}
          .
        </Txt>
      ) : null}
    </Card>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.md },
  title: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  name: { flexShrink: 1 },
  columns: { flexDirection: "row", gap: space.lg, alignItems: "flex-start" },
  column: { flex: 1, minWidth: 0, gap: space.md },
  badges: { flexDirection: "row", flexWrap: "wrap", gap: space.xs, alignItems: "center" },
});
