// The invented staff of the invented card issuer in the demo scenario. Any resemblance to real
// people is unintended. These sign-ins exist for local evaluation only.
import type { Role } from "@/lib/auth/permissions";

export const DEMO_INSTITUTION = "Larkmoor Savings & Card";
/** Shared by every demo account; printed by `npm run demo`. Never use demo accounts in production. */
export const DEMO_PASSWORD = "larkmoor-demo-2026";

export interface DemoPerson {
  email: string;
  displayName: string;
  role: Role;
}

export const demoPeople: DemoPerson[] = [
  { email: "odile.brandt@larkmoor.example", displayName: "Odile Brandt", role: "admin" },
  { email: "teodor.quill@larkmoor.example", displayName: "Teodor Quill", role: "auditor" },
  { email: "maren.okafor@larkmoor.example", displayName: "Maren Okafor", role: "supervisor" },
  { email: "ruben.salcedo@larkmoor.example", displayName: "Ruben Salcedo", role: "supervisor" },
  { email: "ines.varga@larkmoor.example", displayName: "Ines Varga", role: "analyst" },
  { email: "tomasz.edlund@larkmoor.example", displayName: "Tomasz Edlund", role: "analyst" },
  { email: "priya.castellan@larkmoor.example", displayName: "Priya Castellan", role: "analyst" },
  { email: "jonah.whitlock@larkmoor.example", displayName: "Jonah Whitlock", role: "analyst" },
  { email: "aiyana.ferrer@larkmoor.example", displayName: "Aiyana Ferrer", role: "analyst" },
  { email: "kofi.brandvold@larkmoor.example", displayName: "Kofi Brandvold", role: "analyst" },
  { email: "lucia.marchetti@larkmoor.example", displayName: "Lucia Marchetti", role: "analyst" },
  { email: "henrik.adeyemi@larkmoor.example", displayName: "Henrik Adeyemi", role: "analyst" },
  { email: "sunniva.holt@larkmoor.example", displayName: "Sunniva Holt", role: "analyst" },
  { email: "dario.petrescu@larkmoor.example", displayName: "Dario Petrescu", role: "analyst" },
];

/** One account per role, as printed by `npm run demo` and used by the browser tests. */
export const demoSignIns = {
  analyst: "ines.varga@larkmoor.example",
  secondAnalyst: "tomasz.edlund@larkmoor.example",
  supervisor: "maren.okafor@larkmoor.example",
  admin: "odile.brandt@larkmoor.example",
  auditor: "teodor.quill@larkmoor.example",
} as const;
