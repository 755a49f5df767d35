// Runs once when the server starts: invalid environment settings stop the start here, with one
// line per problem, instead of a server that answers every request with an error.
export async function register() {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    const { loadEnv } = await import("./lib/env");
    try {
      loadEnv();
    } catch (error) {
      console.error((error as Error).message);
      process.exit(1);
    }
  }
}
