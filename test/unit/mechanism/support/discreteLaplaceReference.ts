import { D, type Dec } from './exactReference.ts';

/**
 * The discrete Laplace law from its definition (Canonne, Kamath & Steinke 2020, Def. 2), in
 * decimal.js at 50 digits, written independently of src/mechanism: with q = e^(−1/b),
 * P(x) = (e^(1/b) − 1)/(e^(1/b) + 1) · e^(−|x|/b) = (1 − q)/(1 + q) · q^|x|, and summing the
 * geometric series, P(X ≥ k) = q^k/(1 + q) for k ≥ 1, so P(|X| ≥ k) = 2q^k/(1 + q).
 */
export function qOf(b: Dec): Dec {
  return D.exp(new D(-1).div(b));
}

export function laplacePmf(b: Dec, x: number): Dec {
  const e = D.exp(new D(1).div(b));
  return e
    .minus(1)
    .div(e.plus(1))
    .times(D.exp(new D(-Math.abs(x)).div(b)));
}

/** P(|X| ≥ k), k ≥ 1. */
export function laplaceTwoSidedTail(b: Dec, k: number): Dec {
  const q = qOf(b);
  return q.pow(k).times(2).div(q.plus(1));
}

/** P(X > w) = P(X < −w), w ≥ 0. */
export function laplaceUpperTail(b: Dec, w: number): Dec {
  const q = qOf(b);
  return q.pow(w + 1).div(q.plus(1));
}
