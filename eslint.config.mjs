import tseslint from "typescript-eslint";

export default tseslint.config(
  { ignores: ["node_modules/**", ".next/**", "lib/db/generated/**", "data/**", "next-env.d.ts", "coverage/**"] },
  ...tseslint.configs.recommended,
  {
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
      "no-console": "off",
      eqeqeq: ["error", "always"],
    },
  },
  {
    // lib/ is the domain: no framework imports.
    files: ["lib/**/*.ts"],
    rules: {
      "no-restricted-imports": ["error", { patterns: ["next", "next/*", "react", "react-dom", "recharts"] }],
    },
  },
  {
    // lib/stats is pure numerics: no I/O, no database.
    files: ["lib/stats/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        { patterns: ["node:fs", "node:fs/*", "fs", "node:child_process", "@/lib/db/*", "next", "next/*", "react"] },
      ],
    },
  },
);
