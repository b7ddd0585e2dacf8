import { Slot } from "expo-router";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { useFonts } from "expo-font";
import { SafeAreaProvider } from "react-native-safe-area-context";
import { View } from "react-native";
import { ApiError } from "../hooks/api";
import { palette } from "../components/theme";

export { ErrorView as ErrorBoundary } from "../components/error-view";

const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      retry: (failures, error) =>
        !(error instanceof ApiError && error.status >= 400 && error.status < 500) && failures < 2,
      refetchOnWindowFocus: false,
    },
  },
});

export default function RootLayout() {
  const [loaded, fontError] = useFonts({
    Inter_400Regular: require("../assets/fonts/Inter_400Regular.ttf"),
    Inter_600SemiBold: require("../assets/fonts/Inter_600SemiBold.ttf"),
    Inter_700Bold: require("../assets/fonts/Inter_700Bold.ttf"),
    IBMPlexMono_400Regular: require("../assets/fonts/IBMPlexMono_400Regular.ttf"),
    IBMPlexMono_600SemiBold: require("../assets/fonts/IBMPlexMono_600SemiBold.ttf"),
  });
  if (!loaded && !fontError) return <View style={{ flex: 1, backgroundColor: palette.canvas }} />;
  return (
    <SafeAreaProvider>
      <QueryClientProvider client={queryClient}>
        <Slot />
      </QueryClientProvider>
    </SafeAreaProvider>
  );
}
