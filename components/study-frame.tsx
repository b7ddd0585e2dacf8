/**
 * A study's frame: its name, your role, whether it is archived (read only),
 * and the sections Data · Models · Fits · Team · Activity. Below a section's
 * first page (a fit, a region, a new model) the name shrinks to one line and
 * the description is left out, so the page's own numbers start in the first
 * screen of a phone.
 */
import type { ReactNode } from "react";
import { Pressable, ScrollView, StyleSheet, Text, View } from "react-native";
import { Link, usePathname, useRouter } from "expo-router";
import { Badge, Failure, Notice, Pending, Txt } from "./ui";
import { fonts, palette, radius, space, type } from "./theme";
import { ApiError } from "../hooks/api";
import { can, useStudy } from "../hooks/use-study";
import { roleLabel } from "./studies-screen";
import { dateWords } from "../contract/dates";

const sections = [
  { path: "data", label: "Data", action: "data.read" },
  { path: "models", label: "Models", action: "models.read" },
  { path: "fits", label: "Fits", action: "fits.read" },
  { path: "team", label: "Team", action: "members.list" },
  { path: "activity", label: "Activity", action: "activity.list" },
] as const;

export function StudyFrame(props: { studyId: string; children: ReactNode }) {
  const study = useStudy(props.studyId);
  const pathname = usePathname();
  const router = useRouter();
  if (study.isPending) return <Pending label="Loading the study…" />;
  // Unknown, deleted or not yours: the server answers 404 alike, and trying again cannot help.
  if (study.isError && study.error instanceof ApiError && study.error.status === 404)
    return <StudyNotFound />;
  if (study.isError)
    return (
      <Failure
        error={study.error}
        title="This study could not be opened"
        onRetry={() => study.refetch()}
      />
    );
  const base = `/studies/${props.studyId}`;
  const visible = sections.filter((s) => can(study.data, s.action));
  // /studies/:id/:section/… — a page inside a section
  const deep = pathname.split("/").filter(Boolean).length > 3;
  return (
    <View style={styles.root}>
      <View style={styles.head}>
        <Txt
          kind={deep ? "lead" : "headline"}
          accessibilityRole="header"
          numberOfLines={deep ? 1 : undefined}
          style={styles.name}
          testID="study-name"
        >
          {study.data.name}
        </Txt>
        <Badge
          label={`You: ${roleLabel(study.data.role)}`}
          tone={study.data.role === "owner" ? "accent" : "neutral"}
        />
        {study.data.restricted ? <Badge label="Participant rows restricted" tone="danger" /> : null}
        {study.data.archivedAt ? <Badge label="Archived — read only" tone="accent" /> : null}
      </View>
      {study.data.archivedAt ? (
        <Notice tone="caution" title="Archived — read only" testID="archived-notice">
          This study was archived on {dateWords(study.data.archivedAt)}. Everything in it can be
          read and exported; nothing can be changed by any member.{" "}
          {study.data.role === "owner"
            ? "You can unarchive it under Team."
            : "An Owner can unarchive it."}
        </Notice>
      ) : null}
      {study.data.description && !deep ? (
        <Txt kind="small" style={{ color: palette.muted }}>
          {study.data.description}
        </Txt>
      ) : null}
      <ScrollView
        horizontal
        showsHorizontalScrollIndicator={false}
        contentContainerStyle={styles.tabs}
        accessibilityRole="tablist"
      >
        {visible.map((section) => {
          const href = `${base}/${section.path}`;
          const active = pathname === href || pathname.startsWith(`${href}/`);
          return (
            <Pressable
              key={section.path}
              accessibilityRole="tab"
              accessibilityState={{ selected: active }}
              onPress={() =>
                router.push({
                  pathname: `/studies/[studyId]/${section.path}`,
                  params: { studyId: props.studyId },
                })
              }
              style={[styles.tab, active && styles.tabActive]}
            >
              <Text style={[styles.tabText, active && styles.tabTextActive]}>{section.label}</Text>
            </Pressable>
          );
        })}
      </ScrollView>
      <View style={styles.body}>{props.children}</View>
    </View>
  );
}

function StudyNotFound() {
  return (
    <View style={styles.root} testID="study-not-found" accessibilityRole="alert">
      <Txt kind="headline" accessibilityRole="header">
        Study not found
      </Txt>
      <Txt style={{ color: palette.muted }}>
        There is no study at this address that you belong to. It may have been deleted, or you may
        not have been invited to it.
      </Txt>
      <Link href="/studies" style={styles.link}>
        Go to your studies
      </Link>
    </View>
  );
}

const styles = StyleSheet.create({
  link: { color: palette.focus, fontWeight: "600", minHeight: 44, paddingVertical: space.sm },
  root: { gap: space.md },
  head: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  name: { flexShrink: 1 },
  tabs: { gap: space.xs, paddingVertical: space.xs },
  tab: {
    minHeight: 44,
    justifyContent: "center",
    paddingHorizontal: space.md,
    paddingVertical: space.sm,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.line,
    backgroundColor: palette.surface,
  },
  tabActive: { backgroundColor: palette.ink, borderColor: palette.ink },
  tabText: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.inkSoft },
  tabTextActive: { color: palette.onInk },
  body: { gap: space.lg },
});
