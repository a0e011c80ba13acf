/**
 * A suite's or benchmark's own slice of the shared PostgreSQL and Redis: a connection URL
 * confined to one schema (for child processes), and removal of every Redis key of one queue
 * name. Nothing here touches another queue's keys.
 */
import { Redis } from 'ioredis';

/** DATABASE_URL with `search_path` set to `schema` on every connection (for a child process). */
export function urlWithSchema(databaseUrl: string, schema: string): string {
  const u = new URL(databaseUrl);
  u.searchParams.set('options', `-c search_path=${schema}`);
  return u.toString();
}

/** Delete every key of a BullMQ queue name (and Fulcrum's cancel keys) from a Redis. */
export async function dropQueueKeys(redisUrl: string, queueName: string): Promise<void> {
  const r = new Redis(redisUrl, { maxRetriesPerRequest: 1 });
  r.on('error', () => {});
  try {
    for (const pattern of [`bull:${queueName}:*`, `fulcrum:${queueName}:*`]) {
      let cursor = '0';
      do {
        const [next, keys] = await r.scan(cursor, 'MATCH', pattern, 'COUNT', 500);
        cursor = next;
        if (keys.length > 0) await r.del(...keys);
      } while (cursor !== '0');
    }
  } finally {
    r.disconnect();
  }
}
