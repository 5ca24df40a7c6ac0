// Axe in the page: a test fails on any serious or critical violation inside `include`, and the
// failure names the screen or step, the rule and the elements.
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { expect } from 'vitest';

export async function expectNoSeriousViolations(page: Page, include: string, label: string) {
  const results = await new AxeBuilder({ page }).include(include).analyze();
  const serious = results.violations.filter(
    (v) => v.impact === 'serious' || v.impact === 'critical',
  );
  expect(
    serious.map((v) => `${label}: ${v.id} ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`),
  ).toEqual([]);
}
