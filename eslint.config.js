// @ts-check
import fs from "node:fs";
import js from "@eslint/js";
import tseslint from "typescript-eslint";
import importX from "eslint-plugin-import-x";
import { createTypeScriptImportResolver } from "eslint-import-resolver-typescript";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";

// Import boundaries: the client never reaches into server/ or worker/, features never import each
// other, shared/ imports nothing of ours, the server never imports the worker.
const features = fs.existsSync("src/features")
  ? fs
      .readdirSync("src/features", { withFileTypes: true })
      .filter((d) => d.isDirectory())
      .map((d) => d.name)
  : [];

export default tseslint.config(
  { ignores: ["dist/**", ".builds/**", "node_modules/**", "drizzle/**", ".data/**", ".bench/**", "inbox/**", "coverage/**"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    plugins: { "import-x": importX },
    settings: { "import-x/resolver-next": [createTypeScriptImportResolver({ project: "tsconfig.json" })] },
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_", caughtErrors: "none" }],
      "@typescript-eslint/no-non-null-assertion": "off",
      "import-x/no-cycle": ["error", { maxDepth: 10 }],
      "import-x/no-restricted-paths": [
        "error",
        {
          zones: [
            {
              target: "./src",
              from: ["./server", "./worker", "./scripts", "./tests"],
              message: "Client code must not import server, worker or script code.",
            },
            {
              target: "./shared",
              from: ["./src", "./server", "./worker", "./scripts", "./tests"],
              message: "shared/ imports nothing of ours.",
            },
            {
              target: "./server",
              from: ["./worker", "./src"],
              except: ["./pipeline"],
              message: "The server may use the image pipeline (worker/pipeline) but no other worker or client code.",
            },
            { target: "./src/features", from: "./src/app", message: "Features must not import the app layer." },
            ...features.map((f) => ({
              target: `./src/features/${f}`,
              from: "./src/features",
              except: [`./${f}`],
              message: "Features must not import each other; move shared code to src/components or src/lib.",
            })),
          ],
        },
      ],
    },
  },
  {
    files: ["src/**/*.{ts,tsx}"],
    plugins: { "react-hooks": reactHooks },
    rules: { ...reactHooks.configs.recommended.rules },
  },
);
