/** The standing caution of every screen that leads to action on a customer (DESIGN.md §5). */
export function Caution({ className = "" }: { className?: string }) {
  return (
    <p className={`text-xs text-ink-soft ${className}`} role="note">
      A score supports the analyst&apos;s decision; it does not make it. Any action towards a customer (block,
      decline, contact) follows the institution&apos;s procedures and local law.
    </p>
  );
}
