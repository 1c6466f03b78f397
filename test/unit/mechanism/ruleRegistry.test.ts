import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  DEFAULT_DRAW_RULE,
  DRAW_RULES,
  RULES,
  RULE_NAMES,
  RULE_SENTENCES,
  STATEMENT_MECHANISMS,
  drawRuleOr,
  makeDraw,
  ruleModule,
  ruleOfStatementMechanism,
  InvalidMechanismConfig,
} from '../../../src/mechanism/index.ts';
import { decimalWithPrecision } from '../../../src/mechanism/decimal.ts';
import { seededRandom } from './support/seededRandom.ts';

const root = new URL('../../../', import.meta.url);

describe('the rule registry (src/mechanism/rules/)', () => {
  it('gives every rule its own id, statement name and sampler, and makes the first the default', () => {
    for (const field of ['id', 'statementMechanism', 'sampler', 'name', 'sentence'] as const) {
      const values = RULES.map((r) => r[field]);
      expect(new Set(values).size, `two rules share a ${field}: ${values.join(' / ')}`).toBe(RULES.length);
    }
    expect(DEFAULT_DRAW_RULE).toBe(RULES[0].id);
    expect([...DRAW_RULES]).toEqual(RULES.map((r) => r.id));
    expect([...STATEMENT_MECHANISMS]).toEqual(RULES.map((r) => r.statementMechanism));
    for (const r of RULES) {
      expect(RULE_NAMES[r.id]).toBe(r.name);
      expect(RULE_SENTENCES[r.id]).toBe(r.sentence);
      expect(ruleModule(r.id)).toBe(r);
      expect(ruleOfStatementMechanism(r.statementMechanism)).toBe(r);
    }
  });

  it('reads unknown stored values as the default rule, and refuses an unknown rule in makeDraw', () => {
    expect(drawRuleOr('coin')).toBe(DEFAULT_DRAW_RULE);
    expect(drawRuleOr(undefined)).toBe(DEFAULT_DRAW_RULE);
    expect(ruleOfStatementMechanism('coin')).toBe(RULES[0]);
    expect(() => makeDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one', rule: 'coin' as never })).toThrow(
      new InvalidMechanismConfig('the draw rule must be "exponential" or "permute-and-flip" (got "coin")'),
    );
  });

  it('the signed statement’s JSON Schema lists exactly the registry’s rules', () => {
    const schema = JSON.parse(readFileSync(new URL('src/statement/statement-v1.schema.json', root), 'utf8'));
    const ruleEnum = schema.properties?.statement?.properties?.mechanism?.properties?.rule?.enum ?? findRuleEnum(schema);
    expect(ruleEnum).toEqual([...DRAW_RULES]);
  });

  it('the database’s CHECK on elections.draw_rule, in its latest migration, lists exactly the registry’s rules', () => {
    const dir = new URL('migrations/', root);
    const checks = readdirSync(dir)
      .sort()
      .map((f) => readFileSync(new URL(f, dir), 'utf8'))
      .flatMap((text) => [...text.matchAll(/CHECK \(draw_rule IN \(([^)]*)\)\)/g)].map((m) => m[1] as string));
    expect(checks.length).toBeGreaterThan(0);
    const latest = (checks.at(-1) as string).split(',').map((s) => s.trim().replace(/^'|'$/g, ''));
    expect(latest).toEqual([...DRAW_RULES]);
  });

  describe.each(RULES.map((r) => [r.id, r] as const))('%s', (_id, rule) => {
    const Decimal = decimalWithPrecision(60);

    it('its leader bound is 1/n at lead 0 and grows with the lead, staying below 1', () => {
      const a = new Decimal(1).div(7);
      for (const n of [2, 5, 40]) {
        expect(rule.leaderChance(n, a, 0).toNumber()).toBeCloseTo(1 / n, 15);
        let previous = rule.leaderChance(n, a, 0);
        for (let m = 1; m <= 60; m += 1) {
          const next = rule.leaderChance(n, a, m);
          expect(next.gt(previous), `n = ${n}, lead ${m}`).toBe(true);
          expect(next.lt(1)).toBe(true);
          previous = next;
        }
      }
    });

    it('its exact probabilities sum to 1, and a seeded draw names distinct options', () => {
      const draw = makeDraw({ epsilon: '1', options: 6, seats: 3, neighbour: 'replace-one', rule: rule.id });
      const p = draw.exactProbabilities([9, 7, 7, 3, 0, 12]);
      expect(p.reduce((x, y) => x + y, 0)).toBeCloseTo(1, 12);
      const winners = draw.draw([9, 7, 7, 3, 0, 12], seededRandom(5));
      expect(new Set(winners).size).toBe(3);
    });
  });
});

/** The `rule` enum wherever the schema keeps it (under $defs or properties). */
function findRuleEnum(node: unknown): unknown {
  if (node === null || typeof node !== 'object') return undefined;
  const o = node as Record<string, unknown>;
  const rule = (o.properties as Record<string, { enum?: unknown }> | undefined)?.rule;
  if (rule?.enum) return rule.enum;
  for (const value of Object.values(o)) {
    const found = findRuleEnum(value);
    if (found !== undefined) return found;
  }
  return undefined;
}
