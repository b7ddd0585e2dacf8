/**
 * The signed-in frame: a bottom navigation bar on a phone, a side rail from
 * the wide breakpoint on. Holds the research-use caution in its footer.
 */
import type { ReactNode } from "react";
import { Pressable, ScrollView, StyleSheet, Text, View, useWindowDimensions } from "react-native";
import { usePathname, useRouter } from "expo-router";
import { useSafeAreaInsets } from "react-native-safe-area-context";
import { Wordmark } from "./logo";
import { NavIcon, type NavIconName } from "./nav-icons";
import { fonts, palette, radius, space, type, wideBreakpoint } from "./theme";
import { Txt } from "./ui";
import { useAuthOptions } from "../hooks/use-auth";
import { useSignOut } from "../hooks/use-auth";
import type { Me } from "../hooks/use-me";
import { researchUseCaution } from "../contract/cautions";

interface NavItem {
  href: "/studies" | "/planner" | "/mailbox";
  label: string;
  icon: NavIconName;
}

export function AppShell(props: { me: Me; children: ReactNode }) {
  const { width } = useWindowDimensions();
  const wide = width >= wideBreakpoint;
  const pathname = usePathname();
  const insets = useSafeAreaInsets();
  const options = useAuthOptions();
  const signOut = useSignOut();
  const items: NavItem[] = [
    { href: "/studies", label: "Studies", icon: "studies" },
    { href: "/planner", label: "Planner", icon: "planner" },
  ];
  if (options.data?.mailbox) items.push({ href: "/mailbox", label: "Mailbox", icon: "mailbox" });

  const router = useRouter();
  const isActive = (href: string) => pathname === href || pathname.startsWith(`${href}/`);
  const go = (href: NavItem["href"]) => () => router.push(href);

  if (wide) {
    return (
      <View style={styles.wideRoot}>
        <View style={styles.rail} role="navigation">
          <Wordmark />
          <View style={styles.railItems}>
            {items.map((item) => (
              <Pressable
                key={item.href}
                accessibilityRole="link"
                accessibilityState={{ selected: isActive(item.href) }}
                onPress={go(item.href)}
                style={[styles.railItem, isActive(item.href) && styles.railItemActive]}
              >
                <NavIcon
                  name={item.icon}
                  color={isActive(item.href) ? palette.accentInk : palette.muted}
                />
                <Text style={[styles.railLabel, isActive(item.href) && styles.activeText]}>
                  {item.label}
                </Text>
              </Pressable>
            ))}
          </View>
          <View style={styles.railFooter}>
            <Txt kind="caption" numberOfLines={1}>
              {props.me.email}
            </Txt>
            <Pressable
              accessibilityRole="button"
              onPress={() => signOut.mutate()}
              style={[styles.signOutTarget, styles.railSignOut]}
              testID="sign-out"
            >
              <Text style={styles.signOut}>Sign out</Text>
            </Pressable>
          </View>
        </View>
        <ScrollView style={styles.main} contentContainerStyle={styles.mainContent}>
          {props.children}
          <ResearchFooter />
        </ScrollView>
      </View>
    );
  }

  return (
    <View style={styles.phoneRoot}>
      <View style={[styles.topBar, { paddingTop: insets.top + space.sm }]}>
        <Wordmark size={17} />
        <Pressable
          accessibilityRole="button"
          onPress={() => signOut.mutate()}
          style={styles.signOutTarget}
          testID="sign-out"
        >
          <Text style={styles.signOut}>Sign out</Text>
        </Pressable>
      </View>
      <ScrollView style={styles.main} contentContainerStyle={styles.phoneContent}>
        {props.children}
        <ResearchFooter />
      </ScrollView>
      <View style={[styles.bottomBar, { paddingBottom: insets.bottom }]} role="navigation">
        {items.map((item) => (
          <Pressable
            key={item.href}
            accessibilityRole="link"
            accessibilityState={{ selected: isActive(item.href) }}
            onPress={go(item.href)}
            style={styles.tab}
          >
            <NavIcon
              name={item.icon}
              color={isActive(item.href) ? palette.accentInk : palette.muted}
              size={22}
            />
            <Text style={[styles.tabLabel, isActive(item.href) && styles.activeText]}>
              {item.label}
            </Text>
          </Pressable>
        ))}
      </View>
    </View>
  );
}

function ResearchFooter() {
  return (
    <View style={styles.footer}>
      <Txt kind="caption">{researchUseCaution}</Txt>
    </View>
  );
}

const styles = StyleSheet.create({
  wideRoot: {
    flex: 1,
    flexDirection: "row",
    backgroundColor: palette.canvas,
    minHeight: "100%" as unknown as number,
  },
  rail: {
    width: 220,
    borderRightWidth: 1,
    borderRightColor: palette.line,
    backgroundColor: palette.surface,
    padding: space.lg,
    gap: space.xl,
  },
  railItems: { gap: space.xs, flex: 1 },
  railItem: {
    flexDirection: "row",
    alignItems: "center",
    gap: space.sm,
    minHeight: 44,
    paddingVertical: space.sm,
    paddingHorizontal: space.md,
    borderRadius: radius.md,
  },
  railItemActive: { backgroundColor: palette.accentSoft },
  railLabel: { fontFamily: fonts.semibold, fontSize: type.body, color: palette.inkSoft },
  railFooter: { gap: space.xs },
  activeText: { color: palette.accentInk },
  signOut: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.focus },
  signOutTarget: { minHeight: 44, minWidth: 44, justifyContent: "center" },
  railSignOut: { alignSelf: "flex-start" },
  main: { flex: 1 },
  mainContent: {
    padding: space.xl,
    gap: space.lg,
    maxWidth: 1200,
    width: "100%",
    alignSelf: "center",
  },
  phoneRoot: { flex: 1, backgroundColor: palette.canvas, minHeight: "100%" as unknown as number },
  topBar: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    paddingHorizontal: space.lg,
    paddingBottom: space.sm,
    backgroundColor: palette.surface,
    borderBottomWidth: 1,
    borderBottomColor: palette.line,
  },
  phoneContent: { padding: space.lg, gap: space.lg, paddingBottom: space.xxxl },
  bottomBar: {
    flexDirection: "row",
    borderTopWidth: 1,
    borderTopColor: palette.line,
    backgroundColor: palette.surface,
  },
  tab: {
    flex: 1,
    alignItems: "center",
    justifyContent: "center",
    paddingVertical: space.sm,
    gap: 2,
    minHeight: 52,
  },
  tabLabel: { fontSize: type.caption, fontFamily: fonts.semibold, color: palette.inkSoft },
  footer: {
    paddingVertical: space.lg,
    borderTopWidth: 1,
    borderTopColor: palette.line,
    marginTop: space.xl,
  },
});
