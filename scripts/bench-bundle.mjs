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
console.log('First screen (what index.html loads before anything is clicked):');
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
