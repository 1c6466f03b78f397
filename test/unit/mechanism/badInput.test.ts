import { describe, expect, it } from 'vitest';
import { VeiltallyError } from '../../../src/errors.ts';
import {
  assessElectorate,
  bernoulliExpMinus,
  bernoulliRational,
  buildStatement,
  describeStatement,
  InvalidEpsilon,
  InvalidMechanismConfig,
  InvalidScores,
  makeExponentialDraw,
  uniformBelow,
  uniformBelowSmall,
  type RandomSource,
} from '../../../src/mechanism/index.ts';
import { pooledRandomBytes } from '../../../src/osRandom.ts';

// The operating system's source, as the shells pass it in (the core holds none).
const osRandom = pooledRandomBytes();

// Bad inputs that must be refused with a typed error (common practice: reject at
// construction, never mid-draw). Each row names the input it tries.
const good = { epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' } as const;
const draw = makeExponentialDraw(good);
const labels = ['Bass', 'Alto', 'Tenor'];

describe('makeExponentialDraw refuses bad settings', () => {
  it.each([
    ['ε = 0', { ...good, epsilon: '0' }, InvalidEpsilon],
    ['ε in exponent form', { ...good, epsilon: '1e-3' }, InvalidEpsilon],
    ['ε over 10', { ...good, epsilon: '11' }, InvalidEpsilon],
    ['ε as a float', { ...good, epsilon: 0.5 }, InvalidEpsilon],
    ['ε object that disagrees with its text', { ...good, epsilon: { text: '0.5', num: 1n, den: 3n } }, InvalidEpsilon],
    ['one option', { ...good, options: 1 }, InvalidMechanismConfig],
    ['fractional options', { ...good, options: 3.5 }, InvalidMechanismConfig],
    ['too many options', { ...good, options: 10_001 }, InvalidMechanismConfig],
    ['options as text', { ...good, options: '3' }, InvalidMechanismConfig],
    ['zero seats', { ...good, seats: 0 }, InvalidMechanismConfig],
    ['seats = options', { ...good, seats: 3 }, InvalidMechanismConfig],
    ['seats > options', { ...good, seats: 5 }, InvalidMechanismConfig],
    ['NaN seats', { ...good, seats: Number.NaN }, InvalidMechanismConfig],
    ['unknown neighbour', { ...good, neighbour: 'swap' }, InvalidMechanismConfig],
    ['missing neighbour', { ...good, neighbour: undefined }, InvalidMechanismConfig],
  ])('%s', (_name, cfg, type) => {
    const attempt = () => makeExponentialDraw(cfg as never);
    expect(attempt).toThrow(type);
    expect(attempt).toThrow(VeiltallyError);
  });

  it('refuses a missing configuration', () => {
    expect(() => makeExponentialDraw(null as never)).toThrow(InvalidMechanismConfig);
  });
});

describe('draw and exactProbabilities refuse bad scores', () => {
  it.each([
    ['too few scores', [1, 2]],
    ['too many scores', [1, 2, 3, 4]],
    ['a negative score', [1, -1, 0]],
    ['a fractional score', [1, 0.5, 0]],
    ['NaN', [1, Number.NaN, 0]],
    ['Infinity', [1, Infinity, 0]],
    ['an unsafe integer', [2 ** 53, 0, 0]],
    ['text', ['1', 0, 0]],
    ['not an array', '1,2,3'],
  ])('%s', (_name, scores) => {
    expect(() => draw.draw(scores as never, osRandom)).toThrow(InvalidScores);
    expect(() => draw.exactProbabilities(scores as never)).toThrow(InvalidScores);
  });

  it('refuses a missing random source and a short one', () => {
    expect(() => draw.draw([1, 2, 3], undefined as never)).toThrow(InvalidMechanismConfig);
    const short: RandomSource = (n) => new Uint8Array(Math.max(0, n - 1));
    expect(() => draw.draw([1, 2, 3], short)).toThrow(TypeError);
  });
});

describe('bounds and assessElectorate refuse bad parameters', () => {
  it.each([[0], [1], [-0.1], [1.5], [Number.NaN], [Infinity]])('β = %s', (beta) => {
    expect(() => draw.bounds(beta)).toThrow(InvalidMechanismConfig);
  });
  it('β as text', () => expect(() => draw.bounds('0.05' as never)).toThrow(InvalidMechanismConfig));
  it.each([[0], [-5], [2.5], [Number.NaN]])('expected voters = %s', (voters) => {
    expect(() => assessElectorate(draw, voters)).toThrow(InvalidMechanismConfig);
  });
});

describe('buildStatement refuses inconsistent input', () => {
  const base = { draw, optionLabels: labels, winners: [0], turnout: null };
  it.each([
    ['too few labels', { ...base, optionLabels: ['Bass', 'Alto'] }],
    ['an empty label', { ...base, optionLabels: ['Bass', ' ', 'Tenor'] }],
    ['a duplicate label', { ...base, optionLabels: ['Bass', 'Bass', 'Tenor'] }],
    ['a label that is not text', { ...base, optionLabels: ['Bass', 2, 'Tenor'] }],
    ['too many winners', { ...base, winners: [0, 1] }],
    ['no winners for a drawn result', { ...base, winners: [] }],
    ['a winner out of range', { ...base, winners: [3] }],
    ['a fractional winner', { ...base, winners: [0.5] }],
    ['a negative turnout', { ...base, turnout: -1 }],
    ['a fractional turnout', { ...base, turnout: 2.5 }],
    ['turnout 0 with winners', { ...base, turnout: 0 }],
    ['no-ballot outcome with turnout', { ...base, winners: null, turnout: 5 }],
    ['a title that is not text', { ...base, electionTitle: 7 }],
    ['an overlong title', { ...base, electionTitle: 'x'.repeat(201) }],
  ])('%s', (_name, input) => {
    expect(() => buildStatement(input as never)).toThrow(InvalidMechanismConfig);
  });

  it('refuses repeated winners in a multi-seat result', () => {
    const two = makeExponentialDraw({ ...good, seats: 2 });
    expect(() => buildStatement({ ...base, draw: two, winners: [1, 1] })).toThrow(InvalidMechanismConfig);
  });
});

describe('describeStatement refuses statements it has no words for', () => {
  it.each([
    ['version 2', { statementVersion: 2 }],
    ['no version', {}],
    ['null', null],
  ])('%s', (_name, statement) => {
    expect(() => describeStatement(statement as never)).toThrow(InvalidMechanismConfig);
  });
});

describe('samplers refuse impossible parameters', () => {
  it.each([
    ['osRandom(-1)', () => osRandom(-1)],
    ['osRandom(1.5)', () => osRandom(1.5)],
    ['osRandom(NaN)', () => osRandom(Number.NaN)],
    ['uniformBelow(0)', () => uniformBelow(0n, osRandom)],
    ['uniformBelow(-3)', () => uniformBelow(-3n, osRandom)],
    ['uniformBelow(number)', () => uniformBelow(3 as never, osRandom)],
    ['uniformBelowSmall(0)', () => uniformBelowSmall(0, osRandom)],
    ['uniformBelowSmall(2^32 + 1)', () => uniformBelowSmall(2 ** 32 + 1, osRandom)],
    ['uniformBelowSmall(2.5)', () => uniformBelowSmall(2.5, osRandom)],
    ['Bernoulli(p > 1)', () => bernoulliRational(4n, 3n, osRandom)],
    ['Bernoulli(p < 0)', () => bernoulliRational(-1n, 3n, osRandom)],
    ['Bernoulli(den 0)', () => bernoulliRational(0n, 0n, osRandom)],
    ['Bernoulli(exp(−γ)), γ < 0', () => bernoulliExpMinus({ num: -1n, den: 2n }, osRandom)],
    ['Bernoulli(exp(−γ)), den 0', () => bernoulliExpMinus({ num: 1n, den: 0n }, osRandom)],
    ['Bernoulli(exp(−γ)), number γ', () => bernoulliExpMinus({ num: 1, den: 2 } as never, osRandom)],
  ])('%s', (_name, attempt) => {
    expect(attempt).toThrow(RangeError);
  });
});
