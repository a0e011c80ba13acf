/** Writing one benchmark's section of docs/benchmarks.md, shared by the benchmarks. */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname } from 'node:path';

/** Replace (or append) one "## Heading" section of a markdown file; creates it with "# Benchmarks" when missing. */
export function updateSection(path: string, heading: string, body: string): void {
  mkdirSync(dirname(path), { recursive: true });
  const text = existsSync(path) ? readFileSync(path, 'utf8') : '# Benchmarks\n';
  const lines = text.split('\n');
  const start = lines.findIndex((l) => l.trim() === heading);
  const block = [heading, '', body.trimEnd(), ''];
  let out: string[];
  if (start < 0) {
    out = [...lines];
    while (out.length > 0 && out[out.length - 1].trim() === '') out.pop();
    out.push('', ...block);
  } else {
    let end = start + 1;
    while (end < lines.length && !/^## /.test(lines[end])) end++;
    out = [...lines.slice(0, start), ...block, ...lines.slice(end)];
  }
  writeFileSync(path, out.join('\n').replace(/\n*$/, '\n'));
}
