// The Content-Security-Policy both shells apply: the app loads only its own bundled code and
// styles, talks only to its own origin, and may not be framed or post forms anywhere.

/** `connect` lists extra sources for fetch/WebSocket (serve mode adds its own ws:// origin). */
export function contentSecurityPolicy(connect: string[] = []): string {
  return [
    "default-src 'none'",
    "script-src 'self'",
    "style-src 'self'",
    "img-src 'self' data:",
    "font-src 'self'",
    `connect-src ${["'self'", ...connect].join(' ')}`,
    "base-uri 'none'",
    "form-action 'none'",
    "frame-ancestors 'none'",
    "object-src 'none'",
  ].join('; ');
}
