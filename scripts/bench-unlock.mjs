#!/usr/bin/env node
// Times the key-slot derivation (argon2id through hash-wasm, the same package and parameters the
// tablet uses: pwa/src/data/crypto/key-slots.ts) on this machine, and what that means for an
// offline guess of every 6-digit PIN (docs/threat-model.md). Figures are printed, not asserted.
// BENCH_ROUNDS (default 5) derivations per parameter set; the median is reported.
import { argon2id } from 'hash-wasm';

const rounds = Number(process.env.BENCH_ROUNDS ?? 5);
const sets = [
  { name: 'tablet default', memoryKiB: 32 * 1024, iterations: 2 },
  { name: 'floor (OWASP minimum)', memoryKiB: 19 * 1024, iterations: 2 },
];
// Published bound (tobtu.com, "Minimum password settings", 2022): argon2id at 19 MiB/t=2 keeps
// one high-end GPU (memory-bandwidth bound) under about 10,000 guesses a second. The GPU's cost
// grows about with memory × passes, so other parameters are scaled from that figure.
const gpuGuessesPerSecond = (set) => (10_000 * (19 * 1024 * 2)) / (set.memoryKiB * set.iterations);
const PINS = 1_000_000;

const median = (values) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
const salt = new Uint8Array(16).fill(1);

console.log(`argon2id derivation on this machine (${rounds} rounds each, median):`);
for (const set of sets) {
  const times = [];
  for (let i = 0; i < rounds; i += 1) {
    const started = performance.now();
    await argon2id({
      password: `48291${i}`,
      salt,
      iterations: set.iterations,
      memorySize: set.memoryKiB,
      parallelism: 1,
      hashLength: 32,
      outputType: 'binary',
    });
    times.push(performance.now() - started);
  }
  const ms = median(times);
  const gpu = Math.round(gpuGuessesPerSecond(set));
  console.log(
    `  ${set.name.padEnd(22)} ${String(set.memoryKiB / 1024).padStart(3)} MiB, t=${set.iterations}: ` +
      `${ms.toFixed(0)} ms per unlock; every 6-digit PIN on this CPU core: ${((PINS * ms) / 3_600_000).toFixed(0)} h; ` +
      `on one high-end GPU (~${gpu.toLocaleString('en')}/s, published bound): ${(PINS / gpu / 60).toFixed(0)} min`,
  );
}
