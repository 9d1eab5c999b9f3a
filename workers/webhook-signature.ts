import { createHmac } from 'node:crypto';

/**
 * Webhook signatures: header `Heatpath-Signature: t=<unix seconds>,v1=<hex>`
 * where v1 = HMAC-SHA256(secret, "<t>.<raw body>"). Signing the timestamp with
 * the body lets a receiver reject replays older than its tolerance.
 */
export const WEBHOOK_SIGNATURE_HEADER = 'Heatpath-Signature';

export function signWebhookBody(secret: string, body: string, unixSeconds: number): string {
  const v1 = createHmac('sha256', secret).update(`${unixSeconds}.${body}`, 'utf8').digest('hex');
  return `t=${unixSeconds},v1=${v1}`;
}
