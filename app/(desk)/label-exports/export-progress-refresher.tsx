"use client";
// While an export runs, re-renders the page from the server every few seconds so its progress moves;
// stops as soon as no export is running.
import { useRouter } from "next/navigation";
import { useEffect } from "react";

export function ExportProgressRefresher({ running, intervalMs = 2_000 }: { running: boolean; intervalMs?: number }) {
  const router = useRouter();
  useEffect(() => {
    if (!running) return;
    const timer = setInterval(() => router.refresh(), intervalMs);
    return () => clearInterval(timer);
  }, [running, intervalMs, router]);
  return null;
}
