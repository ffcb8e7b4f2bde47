import { z } from 'zod';

/** The local fake mail server's outbox, shown to administrators in demos and tests. */
export const outboxMessageSchema = z.object({
  id: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  receivedAt: z.string(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;
export const outboxResponseSchema = z.object({ messages: z.array(outboxMessageSchema) });
