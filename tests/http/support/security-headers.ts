/**
 * The security headers expected on every response the app writes, success or error alike (section
 * numbers from memory).
 */
export const SECURITY_HEADERS = {
  'x-content-type-options': 'nosniff', // Fetch Standard §X-Content-Type-Options
  'cache-control': 'no-store', // RFC 9111 §5.2.2.5
  'referrer-policy': 'no-referrer', // W3C Referrer Policy §3.1
  'x-frame-options': 'DENY', // RFC 7034 §2.1
  'content-security-policy': "default-src 'none'; frame-ancestors 'none'", // CSP Level 2 §7.7
} as const;
