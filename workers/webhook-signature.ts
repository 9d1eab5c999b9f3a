import { createHmac } from 'node:crypto';

/**
 * Webhook signatures: header `Heatpath-Signature: t=<unix seconds>,v1=<hex>`
 * where v1 = HMAC-SHA256(secret, "<t>.<raw body>"). Signing the timestamp with
 * the body lets a receiver reject replays older than its tolerance.
 */
export const WEBHOOK_SIGNATURE_HEADER = 'Heatpath-Signature';
/** The event of a delivery, as in its body. */
export const WEBHOOK_EVENT_HEADER = 'Heatpath-Event';
/** The delivery's id: the same for every attempt of one delivery, so a receiver can tell a retry from a new event. */
export const WEBHOOK_DELIVERY_HEADER = 'Heatpath-Delivery';

export function signWebhookBody(secret: string, body: string, unixSeconds: number): string {
  const v1 = createHmac('sha256', secret).update(`${unixSeconds}.${body}`, 'utf8').digest('hex');
  return `t=${unixSeconds},v1=${v1}`;
}
