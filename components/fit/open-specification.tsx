/**
 * "Fit this specification" under a selected specification of a curve: for
 * those who may run fits, opens the specification as an ordinary fit of its
 * own model (hooks/use-open-specification.ts: an existing model with the
 * same fields and its current fit are reused) and navigates to that fit.
 */
import { useRouter } from "expo-router";
import { StyleSheet, View } from "react-native";
import { type OpenSpecification, useOpenSpecification } from "../../hooks/use-open-specification";
import { Button, Notice, Txt } from "../ui";
import { palette, space } from "../theme";
import { mutateThen } from "../../hooks/mutate-then";

export interface OpenSpecificationContext {
  studyId: string;
  curve: OpenSpecification["curve"];
  curveModel: OpenSpecification["curveModel"];
}

export function OpenSpecificationButton({
  context,
  index,
  choice,
}: {
  context: OpenSpecificationContext;
  index: number;
  choice: OpenSpecification["choice"];
}) {
  const router = useRouter();
  const open = useOpenSpecification(context.studyId);
  return (
    <View style={styles.root}>
      {open.error ? <Notice tone="danger">{open.error.message}</Notice> : null}
      <Button
        label="Fit this specification"
        testID="curve-open-specification"
        busy={open.isPending}
        onPress={() =>
          mutateThen(
            open,
            { curve: context.curve, curveModel: context.curveModel, index, choice },
            ({ fitId }) =>
              router.push({
                pathname: "/studies/[studyId]/fits/[fitId]",
                params: { studyId: context.studyId, fitId },
              }),
          )
        }
        style={styles.button}
      />
      <Txt kind="caption" style={{ color: palette.muted }}>
        An ordinary fit of this specification's model, with the rules it switched on as part of the
        model; a model with the same fields is reused.
      </Txt>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.xs, marginTop: space.sm },
  button: { alignSelf: "flex-start" },
});
