import type { ServerResponse } from 'node:http';

/**
 * Headers every response carries. The service answers JSON to EHR clients and is never meant to be
 * framed, sniffed as HTML or cached on the way: hook answers and their errors carry patient-derived
 * advice, so no shared or browser cache may keep them. CORS stays in cors.ts.
 */

/** One year, in seconds (RFC 6797 §11.2 suggests a long max-age once HTTPS is settled; common practice). */
export const HSTS_MAX_AGE_SECONDS = 31_536_000;

export interface SecurityHeaderOptions {
  /**
   * Send `Strict-Transport-Security` (RFC 6797). Only when every client reaches the service over
   * HTTPS (TLS ended at the service or at a proxy in front of it); over plain HTTP it is ignored.
   */
  readonly strictTransportSecurity: boolean;
}

export function securityHeaderValues(options: SecurityHeaderOptions): Readonly<Record<string, string>> {
  return {
    // Fetch Standard §X-Content-Type-Options: no sniffing a JSON body as something else.
    'X-Content-Type-Options': 'nosniff',
    // RFC 9111 §5.2.2.5: no cache on the way or in the browser stores a response.
    'Cache-Control': 'no-store',
    // Referrer Policy (W3C): nothing of this URL leaks onward.
    'Referrer-Policy': 'no-referrer',
    // RFC 7034 and CSP Level 2 frame-ancestors: never shown inside a frame; JSON loads nothing.
    'X-Frame-Options': 'DENY',
    'Content-Security-Policy': "default-src 'none'; frame-ancestors 'none'",
    ...(options.strictTransportSecurity
      ? { 'Strict-Transport-Security': `max-age=${HSTS_MAX_AGE_SECONDS}` }
      : {}),
  };
}

/**
 * Sets the headers on a response; the list is built once. Run before any route (request-start.ts),
 * so errors, preflights and 404s carry them too.
 */
export function securityHeaderSetter(options: SecurityHeaderOptions): (res: ServerResponse) => void {
  const values = Object.entries(securityHeaderValues(options));
  return (res) => {
    for (const [name, value] of values) {
      res.setHeader(name, value);
    }
  };
}
