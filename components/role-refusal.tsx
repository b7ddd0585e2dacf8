/**
 * A screen that the caller's role (or the study's archived state) does not
 * allow: a plain sentence and a link back, never a form that would be
 * refused or a "Try again" that cannot succeed. Rights come from the
 * capabilities the study view carries (contract/permissions.ts).
 */
import type { Href } from "expo-router";
import type { ReactNode } from "react";
import { StyleSheet, View } from "react-native";
import { Link } from "expo-router";
import { Card, Txt } from "./ui";
import { palette, space } from "./theme";
import { can, useStudy } from "../hooks/use-study";
import type { Action } from "../contract/permissions";
import { roleLabel } from "./studies-screen";

export interface RoleGateProps {
  studyId: string;
  action: Action;
  /** What the action does, after "cannot": "build models", "see the study's activity". */
  doing: string;
  /** True when the action changes the study (refused in an archived study whatever the role). */
  changes: boolean;
  back: { href: Href; label: string };
  children: ReactNode;
}

/** Renders its children only when the caller may do `action`; otherwise says why, with a link back. */
export function RoleGate(props: RoleGateProps) {
  const study = useStudy(props.studyId);
  // The study frame around every study screen shows the pending and error states of the same query.
  if (!study.data) return null;
  if (can(study.data, props.action)) return <>{props.children}</>;
  const archived =
    props.changes && study.data.archivedAt !== null && study.data.archivedAt !== undefined;
  return (
    <Card testID="role-refusal">
      <View style={styles.body} accessibilityRole="alert">
        <Txt kind="lead">
          {archived
            ? `This study is archived, so no one can ${props.doing} in it.`
            : `Your role in this study (${roleLabel(study.data.role)}) cannot ${props.doing}.`}
        </Txt>
        <Txt kind="small" style={{ color: palette.inkSoft }}>
          {archived
            ? "An Owner can unarchive it under Team."
            : "An Owner of the study can change your role under Team."}
        </Txt>
        <Link href={props.back.href} style={styles.link}>
          {props.back.label}
        </Link>
      </View>
    </Card>
  );
}

const styles = StyleSheet.create({
  body: { gap: space.sm },
  link: { color: palette.focus, fontWeight: "600", minHeight: 44, paddingVertical: space.sm },
});
