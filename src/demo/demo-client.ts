/** A small HTTP client for the demo: JSON in and out, problem+json errors raised with their message. */
export class DemoHttpError extends Error {
  constructor(
    readonly status: number,
    readonly type: string,
    message: string,
  ) {
    super(message);
    this.name = 'DemoHttpError';
  }
}

export function createDemoClient(baseUrl: string, key: string) {
  const call = async <T>(method: string, path: string, body?: unknown, contentType = 'application/json'): Promise<T> => {
    const res = await fetch(`${baseUrl}${path}`, {
      method,
      headers: { authorization: `Bearer ${key}`, ...(body !== undefined ? { 'content-type': contentType } : {}) },
      body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
    });
    const text = await res.text();
    if (!res.ok) {
      let type = 'unknown';
      let detail = text;
      try {
        const p = JSON.parse(text) as { type?: string; detail?: string; title?: string };
        type = p.type ?? type;
        detail = p.detail ?? p.title ?? text;
      } catch {
        // not JSON: keep the text
      }
      throw new DemoHttpError(res.status, type, `${method} ${path} → ${res.status}: ${detail}`);
    }
    return (text ? JSON.parse(text) : undefined) as T;
  };

  return {
    get: <T>(path: string) => call<T>('GET', path),
    post: <T>(path: string, body: unknown) => call<T>('POST', path, body),
    postCsv: <T>(path: string, csv: string) => call<T>('POST', path, csv, 'text/csv'),

    /** Follow a job's server-sent events until it ends; `onJob` sees every update. */
    async followJob<J extends { state: string }>(jobId: string, onJob: (job: J) => void): Promise<J> {
      const res = await fetch(`${baseUrl}/v1/jobs/${jobId}/events`, { headers: { authorization: `Bearer ${key}`, accept: 'text/event-stream' } });
      if (!res.ok || !res.body) throw new DemoHttpError(res.status, 'stream', `cannot follow job ${jobId}: ${res.status}`);
      const decoder = new TextDecoder();
      let buffer = '';
      let last: J | undefined;
      for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
        buffer += decoder.decode(chunk, { stream: true });
        let end: number;
        while ((end = buffer.indexOf('\n\n')) >= 0) {
          const event = buffer.slice(0, end);
          buffer = buffer.slice(end + 2);
          const data = event
            .split('\n')
            .filter((l) => l.startsWith('data: '))
            .map((l) => l.slice(6))
            .join('\n');
          if (!data) continue;
          last = JSON.parse(data) as J;
          onJob(last);
        }
      }
      if (!last) throw new DemoHttpError(0, 'stream', `the event stream of job ${jobId} ended without an event`);
      return last;
    },
  };
}

export type DemoClient = ReturnType<typeof createDemoClient>;
