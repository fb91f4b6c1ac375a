import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex } from '@noble/hashes/utils.js';

/** Bytes read per step: a multi-gigabyte log is hashed without ever being held whole. */
const DIGEST_CHUNK = 8 * 1024 * 1024;

/**
 * SHA-256 (FIPS 180-4) of a Blob read chunk by chunk, with @noble/hashes' incremental hash (the browser's
 * SubtleCrypto only hashes a whole buffer at once).
 */
export async function sha256Blob(blob: Blob, chunk = DIGEST_CHUNK): Promise<string> {
  const hash = sha256.create();
  for (let at = 0; at < blob.size; at += chunk) hash.update(new Uint8Array(await blob.slice(at, at + chunk).arrayBuffer()));
  return bytesToHex(hash.digest());
}
