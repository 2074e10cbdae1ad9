/**
 * Loopback addresses (RFC 1122 §3.2.1.3: 127.0.0.0/8; RFC 4291 §2.5.3: ::1; RFC 6761 §6.3: the name
 * `localhost`). Used for the demo's bind address and for the demo client's FHIR server policy.
 */
const IPV4_LOOPBACK = /^127\.(\d{1,3})\.(\d{1,3})\.(\d{1,3})$/;

/** `host` as given to listen() or as a URL's hostname (IPv6 with or without brackets). */
export function isLoopbackHost(host: string): boolean {
  const name = host.trim().toLowerCase();
  if (name === 'localhost' || name === '::1' || name === '[::1]') {
    return true;
  }
  const match = IPV4_LOOPBACK.exec(name);
  return match !== null && match.slice(1).every((octet) => Number(octet) <= 255);
}
