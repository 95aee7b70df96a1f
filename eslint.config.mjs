// Lint: typescript-eslint's recommended rules plus the layer boundaries of
// DEVELOPERS.md (pure lib, UI never imports server code, nothing imports app/).
import js from "@eslint/js";
import tseslint from "typescript-eslint";

const noApp = { group: ["@/app/*", "**/app/*"], message: "Nothing imports from app/." };

export default tseslint.config(
  {
    ignores: [
      ".next/**",
      "node_modules/**",
      "drizzle/**",
      ".data/**",
      "next-env.d.ts",
      "test-results/**",
      "**/*.tmp.*",
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  // TypeScript checks names in .ts files; the plain .mjs scripts get Node's globals.
  { files: ["**/*.ts", "**/*.tsx"], rules: { "no-undef": "off" } },
  {
    files: ["**/*.mjs"],
    languageOptions: {
      globals: Object.fromEntries(
        [
          "process",
          "console",
          "setTimeout",
          "clearTimeout",
          "setInterval",
          "clearInterval",
          "fetch",
          "URL",
          "Buffer",
        ].map((g) => [g, "readonly"]),
      ),
    },
  },
  {
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
      "no-restricted-imports": ["error", { patterns: [noApp] }],
    },
  },
  {
    files: ["src/lib/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            noApp,
            {
              group: [
                "next",
                "next/*",
                "react",
                "react-dom",
                "drizzle-orm",
                "drizzle-orm/*",
                "pg",
                "pg-boss",
                "node:*",
                "@/*",
              ],
              message:
                "src/lib is pure: no framework, database, Node I/O or app imports (use relative imports within lib).",
            },
          ],
        },
      ],
      "no-restricted-globals": [
        "error",
        { name: "process", message: "src/lib takes its inputs as arguments." },
      ],
    },
  },
  {
    files: ["src/components/**/*.{ts,tsx}", "src/hooks/**/*.{ts,tsx}"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            noApp,
            { group: ["@/server/*", "**/server/*"], message: "UI code never imports server code." },
          ],
        },
      ],
    },
  },
  {
    files: ["src/server/db/queries/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            {
              group: ["../../services/*", "../../auth/*", "@/server/services/*"],
              message: "Queries depend on the schema only.",
            },
          ],
        },
      ],
    },
  },
  {
    files: ["src/app/**/*.{ts,tsx}"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            {
              group: ["@/server/db/queries/*"],
              message: "Pages and routes go through services, not queries.",
            },
          ],
        },
      ],
    },
  },
);
