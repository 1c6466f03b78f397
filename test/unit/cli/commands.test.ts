import { describe, expect, it } from 'vitest';
import { makeExponentialDraw } from '../../../src/mechanism/index.ts';
import { ballotFile, runCli } from './support.ts';

// A tenants' association choosing repairs to fund (invented scenario). The approval
// counts (137 and 241 and 58) are distinctive so any leak into the output shows.
const repairs = ['Roof', 'Lift', 'Boiler'];
const rows = [...Array.from({ length: 137 }, () => '1,1,'), ...Array.from({ length: 104 }, () => ',1,x'), ...Array.from({ length: 9 }, () => ',,')];
const csv = `${repairs.join(',')}\n${rows.join('\n')}\n`; // Roof 137, Lift 241, Boiler 104

describe('veiltally draw', () => {
  it('prints winners and the statement as a table, never the counts', async () => {
    const { code, stdout } = await runCli(['draw', '--ballots', ballotFile(csv), '--epsilon', '1', '--title', 'Repairs 2025']);
    expect(code).toBe(0);
    expect(stdout).toMatch(/Seat\s+Winner/);
    expect(stdout).toMatch(/Repairs 2025: (Roof|Lift|Boiler) was drawn as the winner\./);
    expect(stdout.replace(/\s+/g, ' ')).toContain('by 2.72 (that is e^ε: the number e ≈ 2.718');
    const prose = stdout.replace(/\s+/g, ' ');
    expect(prose).toContain('Caution: The winner is drawn at random, weighted toward the most approved options');
    for (const count of ['137', '241', '104', '250']) expect(stdout).not.toContain(count);
    // It speaks to the person holding the ballots: the counts are theirs, the output leaves them out.
    expect(prose).toContain('You hold the ballot file, so you can count the approvals yourself');
    expect(prose).toContain('leaves the counts out on purpose');
  });

  it('--json gives {"winners": [...], "statement": {...}} and --publish-turnout adds the exact turnout', async () => {
    const file = ballotFile(csv);
    const { code, stdout } = await runCli(['draw', '--ballots', file, '--epsilon', '0.5', '--seats', '2', '--json', '--publish-turnout']);
    expect(code).toBe(0);
    const out = JSON.parse(stdout);
    expect(Object.keys(out)).toEqual(['winners', 'statement']);
    expect(out.winners).toHaveLength(2);
    expect(out.statement).toMatchObject({ statementVersion: 1, epsilon: '0.5', seats: 2, turnout: 250, composition: 'basic' });
    expect(out.statement.protects.whetherVoted).toBeNull();
    for (const count of ['137', '241', '104']) expect(stdout).not.toContain(count);
  });

  it('a header-only file is the zero-ballot outcome: "no ballots cast; no winner drawn"', async () => {
    const file = ballotFile('Roof,Lift,Boiler\n');
    const table = await runCli(['draw', '--ballots', file, '--epsilon', '1']);
    expect(table.code).toBe(0);
    expect(table.stdout).toContain('No ballots cast; no winner drawn.');
    const json = JSON.parse((await runCli(['draw', '--ballots', file, '--epsilon', '1', '--json'])).stdout);
    expect(json.winners).toEqual([]);
    expect(json.statement.outcome).toBe('no-ballots');
  });
});

describe('veiltally simulate', () => {
  it('runs the real sampler and reports frequencies near the exact probabilities', async () => {
    const runs = 20_000;
    const { code, stdout } = await runCli(['simulate', '--scores', '40,35,20', '--epsilon', '0.1', '--runs', String(runs), '--json']);
    expect(code).toBe(0);
    const out = JSON.parse(stdout);
    expect(out.runs).toBe(runs);
    const exact = makeExponentialDraw({ epsilon: '0.1', options: 3, seats: 1, neighbour: 'replace-one' }).exactProbabilities([40, 35, 20]);
    out.options.forEach((o: { option: number; score: number; exactProbability: number; observedFrequency: number }, i: number) => {
      expect(o).toMatchObject({ option: i + 1, score: [40, 35, 20][i] }); // numbered from 1, as on the web
      expect(o.exactProbability).toBeCloseTo(exact[i]!, 12);
      // Six standard errors of a binomial proportion (normal approximation; common practice).
      expect(Math.abs(o.observedFrequency - o.exactProbability)).toBeLessThan(6 * Math.sqrt((o.exactProbability * (1 - o.exactProbability)) / runs));
    });
  });

  it('for several seats reports first-seat frequencies and no exact probability', async () => {
    const out = JSON.parse((await runCli(['simulate', '--scores', '5,4,3,0', '--epsilon', '1', '--seats', '2', '--runs', '2000', '--json'])).stdout);
    expect(out.options.map((o: { exactProbability: unknown }) => o.exactProbability)).toEqual([null, null, null, null]);
    const total = out.options.reduce((s: number, o: { observedFrequency: number }) => s + o.observedFrequency, 0);
    expect(total).toBeCloseTo(1, 12);
  });

  it('prints a table by default', async () => {
    const { stdout } = await runCli(['simulate', '--scores', '3,1', '--epsilon', '1', '--runs', '100']);
    expect(stdout).toMatch(/Option\s+Score\s+Exact probability\s+Observed frequency/);
    expect(stdout).toContain('hypothetical');
    // Options numbered from 1, probabilities as percentages, like the web pages.
    // Exact: e^(a·2)/(e^(a·2)+1) with a = ε/2 = 0.5, so e/(e+1) = 73.11% and 26.89%.
    expect(stdout).toMatch(/^1\s+3\s+73\.11%\s+\d{1,3}\.\d{2}%$/m);
    expect(stdout).toMatch(/^2\s+1\s+26\.89%\s+\d{1,3}\.\d{2}%$/m);
    expect(stdout).not.toMatch(/^0\s/m);
  });
});

describe('veiltally bounds', () => {
  it('--json matches the mechanism’s own bounds', async () => {
    const { code, stdout } = await runCli([
      'bounds',
      '--options',
      '17',
      '--epsilon',
      '0.5',
      '--seats',
      '2',
      '--neighbour',
      'add-remove',
      '--beta',
      '0.1',
      '--json',
    ]);
    expect(code).toBe(0);
    const expected = makeExponentialDraw({ epsilon: '0.5', options: 17, seats: 2, neighbour: 'add-remove' }).bounds(0.1);
    expect(JSON.parse(stdout)).toEqual({
      rule: 'exponential',
      withinApprovals: expected.withinApprovals,
      beta: 0.1,
      perRoundEpsilon: '0.25',
      marginTable: expected.marginTable,
      marginFor: expected.marginFor,
    });
  });

  it('prints the table, the needed leads and the caution', async () => {
    const { stdout } = await runCli(['bounds', '--options', '3', '--epsilon', '1']);
    expect(stdout.replace(/\s+/g, ' ')).toContain('minus 8.19');
    expect(stdout).toContain('Needed lead: 6 for 90%, 8 for 95%, 11 for 99%.');
    expect(stdout).toMatch(/^16\s+99\.93%$/m);
    expect(stdout.replace(/\s+/g, ' ')).toContain('drawn at random, weighted toward the most approved options');
  });
});
