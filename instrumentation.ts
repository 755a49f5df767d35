// Runs once when the server starts: invalid environment settings stop the start here, with one
// line per problem, instead of failing later on the first request that needs them.
export async function register() {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    const { loadEnv } = await import("./lib/env");
    loadEnv();
  }
}
