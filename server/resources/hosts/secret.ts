// Host tokens at rest: AES-256-GCM (node:crypto) under the server's PLEAT_SECRET_KEY. The project's
// id is the additional authenticated data, so a sealed token copied into another project's row
// does not open there. A fresh 96-bit nonce per seal (NIST SP 800-38D, section 8.2.2).
import { createCipheriv, createDecipheriv, randomBytes } from 'node:crypto';

const VERSION = 'v1:';

export function sealToken(key: Buffer, projectId: number, token: string): string {
  const nonce = randomBytes(12);
  const cipher = createCipheriv('aes-256-gcm', key, nonce);
  cipher.setAAD(Buffer.from(`pleat-host-token:${projectId}`));
  const body = Buffer.concat([cipher.update(token, 'utf8'), cipher.final()]);
  return VERSION + Buffer.concat([nonce, cipher.getAuthTag(), body]).toString('base64');
}

/** The token, or null when it was sealed under another key (or for another project) or is damaged. */
export function openToken(key: Buffer, projectId: number, sealed: string): string | null {
  if (!sealed.startsWith(VERSION)) return null;
  const raw = Buffer.from(sealed.slice(VERSION.length), 'base64');
  if (raw.length < 12 + 16) return null;
  try {
    const decipher = createDecipheriv('aes-256-gcm', key, raw.subarray(0, 12));
    decipher.setAAD(Buffer.from(`pleat-host-token:${projectId}`));
    decipher.setAuthTag(raw.subarray(12, 28));
    return Buffer.concat([decipher.update(raw.subarray(28)), decipher.final()]).toString('utf8');
  } catch {
    return null;
  }
}
