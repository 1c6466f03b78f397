import { z } from 'zod';

/** The schedule-a-notice form, as typed; the use-case checks it again with noticeSchema. */
export const noticeForm = z.object({
  kind: z.string().max(20).catch(''),
  hoursBefore: z.string().max(10).catch(''),
});

export function readNotice(body: unknown): { kind: string; hoursBefore: string } {
  const b = noticeForm.parse(body ?? {});
  return { kind: b.kind, hoursBefore: b.hoursBefore.trim() };
}

export const mailingIdField = z.object({ mailingId: z.string().max(40).catch('') });
