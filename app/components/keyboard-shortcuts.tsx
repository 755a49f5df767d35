"use client";
// Keyboard shortcuts for a screen, and the help overlay that lists them (press ?). Each shortcut
// names the element it acts on by id — submit a form, click a control, focus a field — so the
// screen's own forms stay ordinary forms with visible buttons and labels, and a shortcut whose
// element is not on the page does nothing.
import { useCallback, useEffect, useRef, useSyncExternalStore } from "react";

export type ShortcutAction = { submit: string } | { click: string } | { focus: string };

export interface Shortcut {
  /** A single character ("t", "?") or "ctrl+enter" (also ⌘+Enter). */
  keys: string;
  label: string;
  action: ShortcutAction;
}

const TEXT_INPUTS = new Set(["text", "search", "email", "number", "password", "tel", "url", "date", "datetime-local", "time"]);

/** Typing in a field must not trigger single-key shortcuts. */
function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable || target instanceof HTMLTextAreaElement || target instanceof HTMLSelectElement) return true;
  return target instanceof HTMLInputElement && TEXT_INPUTS.has(target.type);
}

function run(action: ShortcutAction): boolean {
  if ("submit" in action) {
    const form = document.getElementById(action.submit);
    if (!(form instanceof HTMLFormElement)) return false;
    form.requestSubmit();
    return true;
  }
  const element = document.getElementById("click" in action ? action.click : action.focus);
  if (!(element instanceof HTMLElement) || (element as HTMLButtonElement).disabled) return false;
  if ("click" in action) element.click();
  else element.focus();
  return true;
}

function keyLabel(keys: string): string {
  return keys === "ctrl+enter" ? "Ctrl+Enter" : keys;
}

const noSubscription = () => () => undefined;

export function KeyboardShortcuts({ shortcuts, title = "Keyboard shortcuts" }: { shortcuts: Shortcut[]; title?: string }) {
  const dialog = useRef<HTMLDialogElement>(null);
  // Shortcuts need the page's script: until it has loaded, the button says so by being disabled.
  const ready = useSyncExternalStore(noSubscription, () => true, () => false);

  const toggleHelp = useCallback(() => {
    const element = dialog.current;
    if (!element) return;
    if (element.open) element.close();
    else element.showModal();
  }, []);

  useEffect(() => {
    const onKeyDown = (event: KeyboardEvent) => {
      if (event.defaultPrevented || event.isComposing) return;
      if (dialog.current?.open) return; // the dialog handles Escape itself
      const submitting = event.key === "Enter" && (event.ctrlKey || event.metaKey);
      if (submitting) {
        const shortcut = shortcuts.find((candidate) => candidate.keys === "ctrl+enter");
        if (shortcut && run(shortcut.action)) event.preventDefault();
        return;
      }
      if (event.key === "Escape" && isTyping(event.target)) {
        // Leave the field so that single-key shortcuts work again.
        (event.target as HTMLElement).blur();
        return;
      }
      if (event.ctrlKey || event.metaKey || event.altKey || isTyping(event.target)) return;
      if (event.key === "?") {
        event.preventDefault();
        toggleHelp();
        return;
      }
      const key = event.key.length === 1 ? event.key.toLowerCase() : event.key;
      const shortcut = shortcuts.find((candidate) => candidate.keys === key);
      if (shortcut && run(shortcut.action)) event.preventDefault();
    };
    document.addEventListener("keydown", onKeyDown);
    return () => document.removeEventListener("keydown", onKeyDown);
  }, [shortcuts, toggleHelp]);

  return (
    <>
      <button
        type="button"
        className="btn px-2 py-1 text-xs disabled:opacity-60"
        onClick={toggleHelp}
        aria-haspopup="dialog"
        disabled={!ready}
        title={ready ? undefined : "Shortcuts work once the page has loaded"}
      >
        Keyboard shortcuts <kbd className="kbd">?</kbd>
      </button>
      <dialog
        ref={dialog}
        aria-labelledby="shortcuts-heading"
        className="panel m-auto w-full max-w-md p-5 backdrop:bg-ink/30"
        onClick={(event) => {
          if (event.target === dialog.current) dialog.current?.close(); // a click on the backdrop
        }}
      >
        <h2 id="shortcuts-heading" className="mb-3 text-base font-semibold">
          {title}
        </h2>
        <table className="data-table">
          <thead>
            <tr>
              <th scope="col">Key</th>
              <th scope="col">Does</th>
            </tr>
          </thead>
          <tbody>
            {shortcuts.map((shortcut) => (
              <tr key={shortcut.keys}>
                <td>
                  <kbd className="kbd">{keyLabel(shortcut.keys)}</kbd>
                </td>
                <td>{shortcut.label}</td>
              </tr>
            ))}
            <tr>
              <td>
                <kbd className="kbd">?</kbd>
              </td>
              <td>Show or hide this list</td>
            </tr>
            <tr>
              <td>
                <kbd className="kbd">Esc</kbd>
              </td>
              <td>Close this list, or leave a text field so letters work as shortcuts again</td>
            </tr>
          </tbody>
        </table>
        <p className="mt-3 text-xs text-ink-soft">Letter keys do nothing while you type in a field.</p>
        <form method="dialog" className="mt-4 text-right">
          <button type="submit" className="btn" autoFocus>
            Close
          </button>
        </form>
      </dialog>
    </>
  );
}
