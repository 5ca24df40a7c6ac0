#!/usr/bin/env node
// `npm run bench:bundle`: builds the PWA and prints the gzip size of what the first screen
// loads (the entry script, its static imports and the CSS, as index.html names them), beside the
// lazily loaded route chunks. A figure to watch, not a pass/fail test.
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { repoRoot, run } from './lib.mjs';

const dist = join(repoRoot, 'pwa', 'dist');
if (!process.argv.includes('--no-build')) {
  await run('npm', ['run', 'build', '-w', 'pwa', '--silent'], {
    stdio: ['ignore', 'ignore', 'inherit'],
  });
}
const html = readFileSync(join(dist, 'index.html'), 'utf8');
const firstScreen = new Set(
  [...html.matchAll(/(?:src|href)="\/(assets\/[^"]+\.(?:js|css))"/g)].map((m) => m[1]),
);
// The sign-in screen's own route chunk is part of the first screen too: it is what /signin
// shows (the route table loads each screen lazily, right after the entry).
const signInChunk = readdirSync(join(dist, 'assets')).find((f) => /^SignInScreen-.*\.js$/.test(f));
if (signInChunk) firstScreen.add(`assets/${signInChunk}`);
// Follow static imports of the entry chunks (rolldown emits `import ... from "./x.js"`).
const queue = [...firstScreen].filter((f) => f.endsWith('.js'));
while (queue.length) {
  const file = queue.pop();
  const code = readFileSync(join(dist, file), 'utf8');
  for (const m of code.matchAll(
    /(?:^|[;\n])\s*import\s*(?:[\w*{}\s,$]+from\s*)?["']\.\/([^"']+\.js)["']/g,
  )) {
    const dep = `assets/${m[1]}`;
    if (!firstScreen.has(dep)) {
      firstScreen.add(dep);
      queue.push(dep);
    }
  }
}
const gz = (file) => gzipSync(readFileSync(join(dist, file)), { level: 9 }).length;
const kb = (n) => `${(n / 1024).toFixed(1)} kB`;
let total = 0;
console.log(
  'First screen (what index.html loads, and the sign-in route it opens, before anything is clicked):',
);
for (const file of [...firstScreen].sort()) {
  const size = gz(file);
  total += size;
  console.log(`  ${kb(size).padStart(10)}  ${file}  (raw ${kb(statSync(join(dist, file)).size)})`);
}
console.log(`  ${kb(total).padStart(10)}  TOTAL gzip, first screen`);
const lazy = readdirSync(join(dist, 'assets')).filter(
  (f) => f.endsWith('.js') && !firstScreen.has(`assets/${f}`),
);
const lazyTotal = lazy.reduce((sum, f) => sum + gz(`assets/${f}`), 0);
console.log(`Loaded on demand: ${lazy.length} chunks, ${kb(lazyTotal)} gzip in all.`);
const AIM_FIRST_SCREEN = 150 * 1024;
const AIM_CHUNK = 500 * 1024;
console.log(
  `Aim: first screen at most ${kb(AIM_FIRST_SCREEN)} gzip: ${total <= AIM_FIRST_SCREEN ? 'met' : 'NOT met'}.`,
);
const chunks = readdirSync(join(dist, 'assets'))
  .filter((f) => f.endsWith('.js'))
  .map((f) => ({ file: f, size: statSync(join(dist, 'assets', f)).size }))
  .sort((a, b) => b.size - a.size);
const over = chunks.filter((c) => c.size > AIM_CHUNK);
console.log(
  `Largest chunks (minified): ${chunks
    .slice(0, 3)
    .map((c) => `${c.file} ${kb(c.size)}`)
    .join(', ')}`,
);
console.log(
  `Aim: no chunk over ${kb(AIM_CHUNK)} minified: ${over.length === 0 ? 'met' : `NOT met (${over.map((c) => c.file).join(', ')})`}.`,
);
