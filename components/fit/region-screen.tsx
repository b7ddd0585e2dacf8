/**
 * One region of a fit as its own view (a phone opens it by tapping a row
 * of the region table): a way back to the table first, with the region
 * highlighted there, then the region's detail from its name and summary
 * down, so it starts within the first screen. Opened by its address on a
 * wide screen, the detail takes two columns as it does below the table.
 */
import { Pressable, StyleSheet, useWindowDimensions, View } from "react-native";
import { useRouter } from "expo-router";
import { RegionDetailPanel } from "./region-detail";
import { fitPathWithRegion } from "./region-path";
import { Failure, Pending, Txt } from "../ui";
import { fonts, palette, space, type, wideBreakpoint } from "../theme";
import { can, useStudy } from "../../hooks/use-study";
import { useFit } from "../../hooks/use-fits";

export function RegionScreen(props: { studyId: string; fitId: string; region: string }) {
  const study = useStudy(props.studyId);
  const fit = useFit(props.fitId);
  const router = useRouter();
  const wide = useWindowDimensions().width >= wideBreakpoint;
  if (fit.isPending || study.isPending) return <Pending label="Loading the region…" />;
  if (fit.isError) return <Failure error={fit.error} onRetry={() => fit.refetch()} />;
  if (study.isError) return <Failure error={study.error} onRetry={() => study.refetch()} />;
  const back = fitPathWithRegion(props.studyId, props.fitId, props.region);
  return (
    <View style={styles.root}>
      <Pressable
        accessibilityRole="link"
        accessibilityLabel={`Back to the regions of ${fit.data.model.name}`}
        onPress={() => router.push(back)}
        style={({ pressed }) => [styles.back, pressed && styles.pressed]}
        testID="region-back"
      >
        <Txt kind="small" style={styles.backText} numberOfLines={1}>
          ← All regions · {fit.data.model.name}
        </Txt>
      </Pressable>
      <RegionDetailPanel
        fit={fit.data}
        region={props.region}
        canRun={can(study.data, "fits.run")}
        canSetAside={can(study.data, "participants.set-aside") && fit.data.participantsVisible}
        columns={wide}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
  back: { minHeight: 44, justifyContent: "center", alignSelf: "flex-start", maxWidth: "100%" },
  backText: { color: palette.focus, fontFamily: fonts.semibold, fontSize: type.small },
  pressed: { opacity: 0.7 },
});
