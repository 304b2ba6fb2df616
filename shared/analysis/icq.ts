/**
 * Li's intensity correlation quotient (Li et al. 2004, "A syntaxin 1, Gαo, and N-type calcium channel
 * complex at a presynaptic nerve terminal: analysis by quantitative immunocolocalization", J. Neurosci.
 * 24:4070, doi:10.1523/JNEUROSCI.0346-04.2004):
 *   ICQ = #{i : (x_i − x̄)(y_i − ȳ) > 0} / n − 0.5, in [−0.5, 0.5].
 * Integer data compares n·x_i with Σx exactly (no rounding of the mean); float data uses compensated means.
 *
 * Degenerate cases (decided here): n < 2 or a constant channel → null (every product would be 0 and the
 * value −0.5 would falsely read as segregation).
 */
import { neumaierSum } from './numeric';
import type { Pairs } from './pairs';

export function icq(p: Pairs): number | null {
  const { x, y, n } = p;
  if (n < 2) return null;
  let constX = true, constY = true;
  const x0 = x[0], y0 = y[0];
  for (let i = 0; i < n && (constX || constY); i++) {
    if (x[i] !== x0) constX = false;
    if (y[i] !== y0) constY = false;
  }
  if (constX || constY) return null;
  let sx: number, sy: number;
  if (p.integer && n <= 2 ** 37) {
    // exact: every partial sum of values ≤ 65535 stays below 2^53
    sx = 0;
    sy = 0;
    for (let i = 0; i < n; i++) {
      sx += x[i];
      sy += y[i];
    }
  } else {
    sx = neumaierSum(x, n);
    sy = neumaierSum(y, n);
  }
  let pos = 0;
  if (p.integer && n <= 2 ** 37) {
    for (let i = 0; i < n; i++) {
      const a = x[i] * n - sx, b = y[i] * n - sy;
      if ((a > 0 && b > 0) || (a < 0 && b < 0)) pos++;
    }
  } else {
    const mx = sx / n, my = sy / n;
    for (let i = 0; i < n; i++) {
      const a = x[i] - mx, b = y[i] - my;
      if ((a > 0 && b > 0) || (a < 0 && b < 0)) pos++;
    }
  }
  return pos / n - 0.5;
}
