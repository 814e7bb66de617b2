// Flat config: TypeScript rules everywhere, React hooks rules in the portal. Type checking itself is
// `tsc -b`; ESLint catches what the compiler does not (hook order, unused expressions, floating code smells).
import js from "@eslint/js";
import tseslint from "typescript-eslint";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";

export default tseslint.config(
  { ignores: ["**/dist/**", "**/node_modules/**", ".data/**", "examples/audio/**", "coverage/**", "tmp/**"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
      "no-constant-condition": ["error", { checkLoops: false }],
    },
  },
  {
    // Services know nothing of HTTP: routes pass plain values and an Actor (server/src/middleware/actor.ts).
    files: ["server/src/services/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          paths: ["express", "express-session", "express-rate-limit"].map((name) => ({ name, message: "services take plain values and an Actor, not HTTP objects" })),
          patterns: [{ group: ["**/middleware/*", "**/routes/*"], message: "services are called by routes and middleware, never the other way round" }],
        },
      ],
    },
  },
  {
    files: ["web/src/**/*.{ts,tsx}", "tests/web/**/*.{ts,tsx}"],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { "react-hooks": reactHooks },
    rules: reactHooks.configs.recommended.rules,
  },
);
