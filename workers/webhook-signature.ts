import { createHmac, timingSafeEqual } from 'node:crypto';

/**
 * Webhook signatures: header `Heatpath-Signature: t=<unix seconds>,v1=<hex>`
 * where v1 = HMAC-SHA256(secret, "<t>.<raw body>"). Signing the timestamp with
 * the body lets a receiver reject replays older than its tolerance.
 */
export const WEBHOOK_SIGNATURE_HEADER = 'Heatpath-Signature';

export function signWebhookBody(secret: string, body: string, unixSeconds: number): string {
  return `t=${unixSeconds},v1=${hmacHex(secret, unixSeconds, body)}`;
}

/** For receivers (and tests): true when the header signs this body with this secret within the tolerance. */
export function verifyWebhookSignature(secret: string, body: string, header: string, nowUnixSeconds: number, toleranceSeconds = 300): boolean {
  const fields = new Map(header.split(',').map((part) => part.split('=', 2) as [string, string]));
  const timestamp = Number(fields.get('t'));
  const given = fields.get('v1') ?? '';
  if (!Number.isInteger(timestamp) || Math.abs(nowUnixSeconds - timestamp) > toleranceSeconds) return false;
  const expected = hmacHex(secret, timestamp, body);
  return given.length === expected.length && timingSafeEqual(Buffer.from(given), Buffer.from(expected));
}

function hmacHex(secret: string, unixSeconds: number, body: string): string {
  return createHmac('sha256', secret).update(`${unixSeconds}.${body}`, 'utf8').digest('hex');
}
