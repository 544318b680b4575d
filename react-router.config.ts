import type { Config } from "@react-router/dev/config";

export default {
  ssr: true,
  // A parallel test run builds into its own folder (scripts/test.sh, TEST_SLOT).
  buildDirectory: process.env.BUILD_DIR ?? "build",
  future: {
    v8_middleware: true,
  },
} satisfies Config;
