/**
 * A done prediction fit (kind "prediction"): the held-out scores first, as
 * three tiles (r, r² and the mean absolute error, each with its permutation
 * p and its spread over repeats) and in plain words, the caution on how
 * to read a prediction, then observed against predicted values with the
 * identity line, the learning curve, the region weights as a sorted dot
 * chart with their sign consistency (the 30 largest, or all), and how the
 * penalty was set. Each plot has the Figure row (SVG, PNG, caption) the
 * region plots have. Phone first: one column; side by side on a wide screen.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import type { PredictionBlock } from "../../contract/prediction";
import { predictionCaution, predictionCautionTitle } from "../../contract/cautions";
import { LearningCurvePlot } from "../charts/learning-curve-plot";
import { ObservedPredictedPlot } from "../charts/observed-predicted-plot";
import { WeightDotPlot } from "../charts/weight-dot-plot";
import { tryLayout } from "../charts/chart-input-error";
import { formatCount } from "../charts/number-format";
import { fonts, palette, radius, space } from "../theme";
import { Button, Card, Heading, Notice, Txt } from "../ui";
import { CollapsedCaution } from "./collapsed-caution";
import { FigureDownloads } from "./figure-downloads";
import {
  lambdaSummary,
  scoreSentence,
  scoreTiles,
  spreadSentence,
  weightRows,
} from "./prediction-layout";

/** How many region weights show before "Show all". */
export const WEIGHTS_SHOWN = 30;

export function PredictionView(props: {
  /** The fit, for the figures' download addresses. */
  fitId: string;
  block: PredictionBlock;
  /** The trait predicted (the model's `predictor`), for sentences and axis titles. */
  trait: string | null;
  /** The confounds removed inside each training fold (the model's covariates). */
  confounds: readonly string[];
  wide: boolean;
  participantsVisible: boolean;
}) {
  const { block, wide } = props;
  const trait = props.trait ?? "trait";
  const [allWeights, setAllWeights] = useState(false);
  const weights = tryLayout(() => weightRows(block.regions, allWeights ? null : WEIGHTS_SHOWN));
  const lambda = tryLayout(() => lambdaSummary(block));
  const spread = spreadSentence(block);
  const total = block.regions.length;
  return (
    <View style={styles.root} testID="prediction-view">
      <Card testID="prediction-scores">
        <Heading level={3}>Held-out prediction</Heading>
        <View style={styles.tiles}>
          {scoreTiles(block).map((tile) => (
            <View
              key={tile.key}
              style={[styles.tile, wide ? styles.tileWide : styles.tilePhone]}
              testID={`score-${tile.key}`}
              accessible
              accessibilityLabel={`${tile.name} ${tile.value}${tile.spread ? ` ${tile.spread} over repeats` : ""}${tile.p ? `, ${tile.p}` : ""}`}
            >
              <Txt kind="caption" style={styles.tileName} numberOfLines={1}>
                {wide ? tile.name : tile.shortName}
              </Txt>
              <Txt kind="lead" style={styles.tileValue}>
                {tile.value}
              </Txt>
              {tile.spread ? (
                <Txt kind="small" style={styles.muted}>
                  {tile.spread}
                </Txt>
              ) : null}
              {tile.p ? (
                <Txt kind="small" style={styles.muted}>
                  {tile.p}
                </Txt>
              ) : null}
            </View>
          ))}
        </View>
        <Txt testID="prediction-sentence">{scoreSentence(block, props.trait)}</Txt>
        {spread ? (
          <Txt kind="caption" style={styles.muted}>
            {spread}
          </Txt>
        ) : null}
        <CollapsedCaution
          title={predictionCautionTitle}
          text={predictionCaution}
          name="caution on reading a prediction"
          testID="prediction-caution"
        />
      </Card>

      <View style={wide ? styles.pairWide : styles.pairPhone}>
        <Card style={wide ? styles.half : null} testID="prediction-scatter">
          <Heading level={3}>Observed and predicted</Heading>
          <Txt kind="caption" style={styles.muted}>
            Each participant's prediction comes from a model fitted without them
            {block.repeats > 1 ? `, averaged over ${formatCount(block.repeats)} repeats` : ""}
            {props.confounds.length > 0
              ? `. Both are after removing ${props.confounds.join(", ")} inside each training fold`
              : ""}
            .
          </Txt>
          {props.participantsVisible && block.participants.length > 0 ? (
            <>
              <ObservedPredictedPlot
                participants={block.participants}
                trait={trait}
                confounds={props.confounds}
                testID="observed-predicted-plot"
              />
              <FigureDownloads
                fitId={props.fitId}
                name="observed-predicted"
                label="observed against predicted plot"
              />
            </>
          ) : (
            <Notice>Participant-level values are not shown to you for this study.</Notice>
          )}
        </Card>
        <Card style={wide ? styles.half : null} testID="prediction-learning">
          <Heading level={3}>Learning curve</Heading>
          <Txt kind="caption" style={styles.muted}>
            Held-out scores when the models are trained on fewer participants. Still rising at the
            right: more participants would likely help.
          </Txt>
          {block.learningCurve && block.learningCurve.length > 0 ? (
            <>
              <LearningCurvePlot points={block.learningCurve} testID="learning-curve-plot" />
              <FigureDownloads fitId={props.fitId} name="learning-curve" label="learning curve" />
            </>
          ) : (
            <Notice>This fit did not compute a learning curve.</Notice>
          )}
        </Card>
      </View>

      <Card testID="prediction-weights">
        <Heading level={3}>Region weights</Heading>
        <Txt kind="caption" style={styles.muted}>
          Mean standardized weight over all training folds
          {weights.layout && weights.layout.hidden > 0
            ? `; the ${formatCount(weights.layout.rows.length)} largest of ${formatCount(total)} regions`
            : ""}
          . Solid dots kept their sign in every fold; faint dots flipped.
        </Txt>
        {weights.layout ? (
          <WeightDotPlot rows={weights.layout.rows} testID="weight-dot-plot" />
        ) : (
          <Notice tone="danger" title="The weights cannot be drawn">
            {weights.problem}
          </Notice>
        )}
        {total > WEIGHTS_SHOWN ? (
          <Button
            label={
              allWeights
                ? `Show the ${WEIGHTS_SHOWN} largest`
                : `Show all ${formatCount(total)} regions`
            }
            variant="secondary"
            onPress={() => setAllWeights(!allWeights)}
            style={styles.showAll}
            testID="weights-show-all"
          />
        ) : null}
        {total > 0 ? (
          <FigureDownloads
            fitId={props.fitId}
            name="weights"
            label={`dot chart of all ${formatCount(total)} region weights`}
          />
        ) : null}
        <Txt kind="small" style={styles.muted} testID="prediction-lambda">
          {lambda.layout ? lambda.layout.text : `Penalty: ${lambda.problem}`}
        </Txt>
      </Card>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  tiles: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  tile: {
    gap: 2,
    paddingVertical: space.sm,
    paddingHorizontal: space.md,
    borderRadius: radius.md,
    backgroundColor: palette.canvas,
    minHeight: 44,
  },
  tilePhone: { flexGrow: 1, flexBasis: "30%", minWidth: 96 },
  tileWide: { flexGrow: 1, flexBasis: 0 },
  tileName: { color: palette.muted },
  tileValue: { fontFamily: fonts.semibold },
  muted: { color: palette.muted },
  pairWide: { flexDirection: "row", gap: space.lg, alignItems: "flex-start" },
  pairPhone: { gap: space.lg },
  half: { flex: 1, minWidth: 0 },
  showAll: { alignSelf: "flex-start" },
});
