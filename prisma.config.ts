import { defineConfig } from "prisma/config";

// Used by the Prisma CLI (generate; migrate deploy where its engine is available).
// The app itself connects through lib/db/client.ts with the pg driver adapter.
export default defineConfig({
  schema: "prisma/schema.prisma",
  migrations: { path: "prisma/migrations" },
  datasource: { url: process.env.DATABASE_URL ?? "postgresql://localhost:5432/triage_desk" },
});
