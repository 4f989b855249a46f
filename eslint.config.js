// One lint setup for the whole repo (STYLE.md habit 9): typescript-eslint's recommended
// rules everywhere, no console in client code, hooks rules as errors.
import tseslint from "typescript-eslint";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";

const FEATURE_SERVICE = { group: ["../*/service"], message: "a feature does not call another feature's service: use the bus, a port in deps, or a module in server/data/" };
const LAYOUTS_FEATURE = {
  group: ["../layouts/*", "**/features/layouts/*"],
  message: "look layouts up through server/data/layouts.ts, not the layouts feature",
};

export default tseslint.config(
  { ignores: ["dist/**", "node_modules/**", ".data/**", "tests/artifacts/**"] },
  ...tseslint.configs.recommended,
  {
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
      "@typescript-eslint/no-explicit-any": "warn",
    },
  },
  {
    files: ["src/**/*.{ts,tsx}"],
    languageOptions: { globals: globals.browser },
    plugins: { "react-hooks": reactHooks },
    rules: {
      "no-console": "error",
      "react-hooks/rules-of-hooks": "error",
      "react-hooks/exhaustive-deps": "error",
    },
  },
  {
    files: ["server/**/*.ts", "broker/**/*.ts", "tests/**/*.{ts,tsx}", "shared/**/*.ts"],
    languageOptions: { globals: globals.node },
  },
  // Layers (DEVELOPERS.md): the live pipeline knows no feature and no HTTP code (alarms and the
  // rest come in through ports); shared/ is pure and imports nothing of the server, the client or
  // Node's I/O; the client reaches the server only through shared/ types and the REST API.
  {
    files: ["server/runtime/**/*.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [{ group: ["**/features/**", "**/http/**", "**/app"], message: "runtime/ imports no feature or HTTP code: pass a port in (server/runtimeDeps.ts)" }] }],
    },
  },
  // Layout lookup is one data module (server/data/layouts.ts) that every feature imports; a
  // feature reaches another feature through the bus or a port, not through its service. The
  // files in the next block still call another feature's service (listed in DEVELOPERS.md);
  // they too may not reach the layouts feature.
  {
    files: ["server/features/**/*.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [FEATURE_SERVICE, LAYOUTS_FEATURE] }],
    },
  },
  {
    files: ["server/features/auth/reset.ts", "server/features/prove/service.ts", "server/features/members/service.ts", "server/features/setup/service.ts", "server/features/live/routes.ts", "server/features/live/socket.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [LAYOUTS_FEATURE] }],
    },
  },
  // deps holds ports: interfaces the runtime and features implement, not their code.
  {
    files: ["server/deps.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [{ group: ["./features/**", "./runtime/**", "./http/**"], message: "server/deps.ts holds ports (interfaces) only: declare the interface here and implement it in the feature or runtime" }] }],
    },
  },
  {
    files: ["server/data/**/*.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [{ group: ["**/features/**", "**/runtime/**"], message: "server/data/ is read by features; it imports none of them" }] }],
    },
  },
  {
    files: ["shared/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [{ group: ["**/server/**", "**/src/**", "**/broker/**"], message: "shared/ is pure: it imports nothing of the server, broker or client" }],
          paths: ["node:fs", "node:net", "node:child_process", "fs", "net", "child_process", "pg", "sequelize", "mqtt"].map((name) => ({ name, message: "shared/ does no I/O" })),
        },
      ],
    },
  },
  {
    files: ["src/**/*.{ts,tsx}"],
    rules: {
      "no-restricted-imports": ["error", { patterns: [{ group: ["**/server/**", "**/broker/**"], message: "the client talks to the server through shared/ types and the REST API only" }] }],
    },
  },
  // The alarm codes are written once, in their tables; everywhere else names them
  // (ALARM_KIND.nodeOffline, ENGINE_ALARM.ruleLoop). "stuck", "chatter" and "rulebook" are
  // ordinary words too, so only the unambiguous codes are caught. Tests may spell them out.
  {
    files: ["server/**/*.ts", "src/**/*.{ts,tsx}", "shared/**/*.ts", "broker/**/*.ts"],
    ignores: ["shared/contract/alarmKinds.ts", "shared/rulebook/engineAlarms.ts"],
    rules: {
      "no-restricted-syntax": [
        "error",
        {
          selector: "Literal[value=/^(node-offline|detector-silent|axle-mismatch|missed-pulses|lamp-proving|points-detection|rule-loop|count-underflow|rule-alarm)$/]",
          message: "name the alarm code from its table: ALARM_KIND (shared/contract/alarmKinds.ts) or ENGINE_ALARM (shared/rulebook/engineAlarms.ts)",
        },
      ],
    },
  },
);
