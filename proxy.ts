// Runs before every page request: passes the requested path and query on to the server components
// (header x-td-path), so a page that finds no session can send the person to
// /sign-in?next=<that page>. It decides nothing about access: every page, action and route handler
// checks the session and the permission itself, on the server.
import { NextResponse, type NextRequest } from "next/server";

export function proxy(request: NextRequest) {
  const headers = new Headers(request.headers);
  headers.set("x-td-path", `${request.nextUrl.pathname}${request.nextUrl.search}`.slice(0, 1000));
  return NextResponse.next({ request: { headers } });
}

export const config = {
  matcher: ["/((?!api/|_next/static|_next/image|favicon.ico).*)"],
};
