import nextCoreWebVitals from "eslint-config-next/core-web-vitals";
import nextTypeScript from "eslint-config-next/typescript";

const config = [
  ...nextCoreWebVitals,
  ...nextTypeScript,
  // Leaving fields out of an object by destructuring the rest is how a row loses its bookkeeping columns.
  { rules: { "@typescript-eslint/no-unused-vars": ["warn", { ignoreRestSiblings: true }] } },
  // Test helpers such as useTestDatabase() are not React hooks despite their names.
  { files: ["tests/**", "e2e/**"], rules: { "react-hooks/rules-of-hooks": "off" } },
  { ignores: ["lib/generated/**", ".next/**", ".data/**", ".bench/**", "node_modules/**", "test-results/**", "playwright-report/**", "next-env.d.ts"] },
];

export default config;
