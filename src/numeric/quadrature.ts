/**
 * Gauss-Legendre quadrature (Abramowitz and Stegun 25.4.29): nodes and weights from Newton's
 * method on the Legendre polynomial, and a composite rule over panels.
 */

/** Nodes and weights of the n-point Gauss-Legendre rule on [-1, 1]. */
export function gaussLegendre(n: number): { nodes: Float64Array; weights: Float64Array } {
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1, p1 = x;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1; p1 = p2;
      }
      const pn = n === 1 ? x : p1;
      const pm = n === 1 ? 1 : p0;
      dp = (n * (x * pn - pm)) / (x * x - 1);
      const dx = pn / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-15) break;
    }
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    const w = 2 / ((1 - x * x) * dp * dp);
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  return { nodes, weights };
}

const RULE = gaussLegendre(16);

/** Integral of f over [a, b] by 16-point Gauss-Legendre on `panels` equal panels. */
export function integrate(f: (x: number) => number, a: number, b: number, panels = 32): number {
  const h = (b - a) / panels;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = a + (p + 0.5) * h;
    for (let i = 0; i < RULE.nodes.length; i++) sum += RULE.weights[i] * f(mid + 0.5 * h * RULE.nodes[i]);
  }
  return 0.5 * h * sum;
}
