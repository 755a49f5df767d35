// Shared shell of every command-line tool: expected failures print one line and exit 1;
// anything unexpected prints its message (the stack only with DEBUG=1) and exits 1.
import { isAppError } from "@/lib/errors";

export async function runCommand(main: () => Promise<number | void>): Promise<never> {
  try {
    const code = await main();
    process.exit(code ?? 0);
  } catch (error) {
    if (isAppError(error)) {
      console.error(`error: ${error.message}`);
      for (const issue of error.issues.slice(0, 20)) {
        console.error(`  ${issue.row !== undefined ? `row ${issue.row}: ` : ""}${issue.path}: ${issue.message}`);
      }
    } else if (process.env.DEBUG) {
      console.error(error);
    } else {
      console.error(`error: ${(error as Error)?.message ?? String(error)} (run with DEBUG=1 for details)`);
    }
    process.exit(1);
  }
}

/** Parses `--name value` and `--flag` options after positional arguments. */
export function parseArguments(argv: string[]): { positional: string[]; options: Record<string, string | true> } {
  const positional: string[] = [];
  const options: Record<string, string | true> = {};
  for (let index = 0; index < argv.length; index += 1) {
    const argument = argv[index];
    if (argument.startsWith("--")) {
      const [name, inline] = argument.slice(2).split("=", 2);
      const next = argv[index + 1];
      if (inline !== undefined) options[name] = inline;
      else if (next !== undefined && !next.startsWith("--")) {
        options[name] = next;
        index += 1;
      } else options[name] = true;
    } else positional.push(argument);
  }
  return { positional, options };
}
