import * as crypto from 'node:crypto';

/**
 * Name-based UUIDs (version 5, SHA-1; RFC 9562 §5.5). A card's uuid is derived from what the card
 * is about, so the same hook call always yields the same uuids: a retried call or a replayed
 * feedback message refers to the same card, and nothing random enters the pure layers.
 */

/** Our namespace: uuidv5(NAMESPACE_URL, 'urn:oxygen-order-checker'). */
export const CARD_UUID_NAMESPACE = '31201df7-a1bc-50cf-904a-9723497658d9';

const UUID_PATTERN = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** The 32 hex digits of a UUID written in the usual 8-4-4-4-12 form. */
function uuidHex(uuid: string): string {
  if (!UUID_PATTERN.test(uuid)) {
    throw new Error('uuidV5: namespace must be a UUID');
  }
  return uuid.replaceAll('-', '');
}

/** The 16 bytes of a UUID written in the usual 8-4-4-4-12 hex form. */
function uuidBytes(uuid: string): Buffer {
  return Buffer.from(uuidHex(uuid), 'hex');
}

/**
 * SHA-1 of a few bytes, as hex. The one-shot `crypto.hash` (Node 20.12 and later) costs about half of a
 * Hash object for a name this short, and a card call makes several; `engines` still admits older Node 20
 * releases, which lack it. Hex rather than a Buffer: the digest is wanted as text, and making the string
 * at once costs less than a Buffer and then its text.
 */
const sha1Hex: (data: Uint8Array) => string =
  typeof crypto.hash === 'function'
    ? (data) => crypto.hash('sha1', data, 'hex')
    : (data) => crypto.createHash('sha1').update(data).digest('hex');

/** The variant digit for each value of the top two bits of byte 8 once set to 10 (RFC 9562 §4.1). */
const VARIANT_DIGITS = '89ab';

/**
 * Where the bytes to hash are written, namespace then the UTF-8 name, reused by every uuid: a card call
 * makes several, and a Buffer made for each (its byte count worked out first) cost a third of the uuid.
 * Nothing runs between writing it and hashing it (all synchronous), so one is enough. A name that might
 * not fit (a UTF-16 unit is at most 3 bytes of UTF-8) gets a buffer of its own.
 */
const SCRATCH = Buffer.alloc(1024);
const SCRATCH_NAME_ROOM = SCRATCH.length - 16;

/** Our namespace's bytes, read once: every card uuid of every call is hashed under it. */
const CARD_NAMESPACE_BYTES = uuidBytes(CARD_UUID_NAMESPACE);

/**
 * RFC 9562 §5.5: SHA-1 over namespace bytes then the UTF-8 name; the first 16 bytes, with version 5 in
 * the high nibble of byte 6 and variant 10 in the top bits of byte 8. Both are set on the hex digits:
 * digit 12 becomes `5`, digit 16 keeps its low two bits under `10`.
 */
function uuidOfHashed(data: Uint8Array): string {
  const hex = sha1Hex(data);
  const variant = VARIANT_DIGITS[Number.parseInt(hex.charAt(16), 16) & 0x3] ?? '';
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-5${hex.slice(13, 16)}-${variant}${hex.slice(17, 20)}-${hex.slice(20, 32)}`;
}

/**
 * The uuid of `name` under our namespace, or under the namespace whose 32 hex digits are given. The
 * namespace's 16 bytes are written first each time (another namespace may have used the scratch since).
 */
function uuidOfName(name: string, namespaceHex?: string): string {
  const fits = name.length * 3 <= SCRATCH_NAME_ROOM;
  const data = fits ? SCRATCH : Buffer.allocUnsafe(16 + Buffer.byteLength(name, 'utf8'));
  if (namespaceHex === undefined) {
    CARD_NAMESPACE_BYTES.copy(data, 0);
  } else {
    data.write(namespaceHex, 0, 'hex');
  }
  const written = data.write(name, 16, 'utf8');
  return uuidOfHashed(fits ? data.subarray(0, 16 + written) : data);
}

/** A version 5 UUID of `name` under `namespace` (RFC 9562 §5.5). */
export function uuidV5(namespace: string, name: string): string {
  // Any namespace but ours (a card's uuid, for its suggestions) is written into the hashed bytes as read.
  return namespace === CARD_UUID_NAMESPACE ? uuidOfName(name) : uuidOfName(name, uuidHex(namespace));
}

/**
 * The uuid of the card for one finding. `occurrence` separates two findings of one rule about the
 * same order in one call (0 for the first, and then it is left out of the name).
 */
export function cardUuid(hookInstance: string, ruleId: string, orderReference: string | undefined, occurrence = 0): string {
  const name = `${hookInstance}\n${ruleId}\n${orderReference ?? '-'}`;
  return uuidOfName(occurrence > 0 ? `${name}\n${occurrence}` : name);
}

/** The uuid of a card's suggestion, derived from the card's uuid and the suggestion's position. */
export function suggestionUuid(cardUuidValue: string, index: number): string {
  return uuidV5(cardUuidValue, `suggestion\n${index}`);
}
