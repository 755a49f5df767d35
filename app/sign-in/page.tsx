import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { getCurrentUser } from "@/lib/auth/current-user";
import { safeNextPath } from "@/lib/http/safe-next-path";
import { SignInForm } from "@/app/sign-in/sign-in-form";

export const metadata: Metadata = { title: "Sign in" };
export const dynamic = "force-dynamic";

export default async function SignInPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const { next: rawNext } = await searchParams;
  const next = safeNextPath(Array.isArray(rawNext) ? rawNext[0] : rawNext);
  if (await getCurrentUser()) redirect(next);
  return (
    <main className="flex min-h-screen items-start justify-center px-4 pt-24">
      <section aria-labelledby="sign-in-heading" className="panel w-full max-w-sm space-y-4 p-6">
        <div>
          <p className="font-semibold tracking-tight text-accent-strong">Triage Desk</p>
          <h1 id="sign-in-heading" className="text-lg font-semibold">
            Sign in
          </h1>
        </div>
        <SignInForm next={next} />
        <p className="text-xs text-ink-soft">Accounts are created by an admin of your team. Forgot your password? Ask an admin.</p>
      </section>
    </main>
  );
}
