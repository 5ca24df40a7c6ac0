// A check of SQL text for one pitfall. In PostgreSQL a bare name in ORDER BY (and DISTINCT ON)
// resolves to an output column of the select list first; GROUP BY prefers an input column. So
// `select "version"::text as "version" … order by "version"` sorts as text: 1000001 comes before
// 743001, and a cursor taken from such a page skips records. Any ORDER BY, GROUP BY or DISTINCT
// ON item that is a bare name also given as the alias of a computed expression is ambiguous to
// the reader whichever way PostgreSQL resolves it: qualify it (r."version") instead.

export interface AliasOrderHazard {
  /** The clause the name was found in. */
  clause: 'order by' | 'group by' | 'distinct on';
  /** The ambiguous name. */
  name: string;
  /** The expression the select list aliases to that name. */
  aliasOf: string;
}

const IDENT = String.raw`(?:"([a-z_][a-z0-9_$]*)"|([a-z_][a-z0-9_$]*))`;

/** Names the select lists alias to something other than the same plain column. */
function computedAliases(sql: string): Map<string, string> {
  const aliases = new Map<string, string>();
  const as = new RegExp(String.raw`\bas\s+${IDENT}`, 'gi');
  for (const match of sql.matchAll(as)) {
    const name = (match[1] ?? match[2] ?? '').toLowerCase();
    const start = match.index ?? 0;
    // The expression before `as`: back to the nearest comma, `select` or `(` at depth 0.
    let depth = 0;
    let i = start - 1;
    for (; i >= 0; i -= 1) {
      const ch = sql[i];
      if (ch === ')') depth += 1;
      else if (ch === '(') {
        if (depth === 0) break;
        depth -= 1;
      } else if (ch === ',' && depth === 0) break;
      else if (depth === 0 && /\bselect\s*$/i.test(sql.slice(Math.max(0, i - 7), i + 1))) break;
    }
    const expression = sql
      .slice(i + 1, start)
      .replace(/^\s*select\b/i, '')
      .trim();
    // `as` of a table or subquery alias (`from x as y`, `) as q`) or a CTE is not a column alias.
    if (expression === '' || /\b(from|join)\s+\S+\s*$/i.test(expression)) continue;
    const plain = new RegExp(String.raw`^(?:${IDENT}\.)?"?${name}"?$`, 'i');
    if (plain.test(expression)) continue;
    aliases.set(name, expression);
  }
  return aliases;
}

const CLAUSE = /\b(order\s+by|group\s+by|distinct\s+on\s*\()/gi;
const CLAUSE_END =
  /\b(limit|offset|for|having|window|union|intersect|except|returning|from|where|select)\b|;|\)\s*(?:$|as\b|select\b|,)/i;

/** The hazards in one SQL text (empty when there are none). */
export function findAliasOrderHazards(sql: string): AliasOrderHazard[] {
  const aliases = computedAliases(sql);
  if (aliases.size === 0) return [];
  const hazards: AliasOrderHazard[] = [];
  for (const match of sql.matchAll(CLAUSE)) {
    const keyword = match[1]!.toLowerCase().replace(/\s+/g, ' ');
    const clause: AliasOrderHazard['clause'] = keyword.startsWith('order')
      ? 'order by'
      : keyword.startsWith('group')
        ? 'group by'
        : 'distinct on';
    let body = sql.slice((match.index ?? 0) + match[0].length);
    const end = body.search(CLAUSE_END);
    if (end >= 0) body = body.slice(0, end);
    if (clause === 'distinct on') body = body.slice(0, Math.max(0, body.indexOf(')')) || undefined);
    for (const item of body.split(',')) {
      const bare = item
        .trim()
        .replace(/\s+(asc|desc)\b.*$/i, '')
        .replace(/\s+nulls\s+(first|last)\b.*$/i, '')
        .trim();
      const named = new RegExp(String.raw`^${IDENT}$`, 'i').exec(bare);
      if (!named) continue;
      const name = (named[1] ?? named[2] ?? '').toLowerCase();
      const aliasOf = aliases.get(name);
      if (aliasOf !== undefined) hazards.push({ clause, name, aliasOf });
    }
  }
  return hazards;
}
