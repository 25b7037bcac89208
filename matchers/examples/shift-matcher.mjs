// A complete module plugin in plain JavaScript: sum of absolute differences over a
// square window, winner takes all, optional parabola sub-pixel refinement.
// Use it with:   parallax run --matcher ./matchers/examples/shift-matcher.mjs:window=7
// See README.md in this folder for the contract.

/** Box sum of a float image with a (2r+1)^2 window; the window is clipped at the borders. */
function boxSum(src, width, height, r, tmp, out) {
  // horizontal pass into tmp
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let acc = 0;
    for (let x = 0; x <= r && x < width; x++) acc += src[row + x];
    for (let x = 0; x < width; x++) {
      tmp[row + x] = acc;
      const add = x + r + 1;
      const sub = x - r;
      if (add < width) acc += src[row + add];
      if (sub >= 0) acc -= src[row + sub];
    }
  }
  // vertical pass into out
  for (let x = 0; x < width; x++) {
    let acc = 0;
    for (let y = 0; y <= r && y < height; y++) acc += tmp[y * width + x];
    for (let y = 0; y < height; y++) {
      out[y * width + x] = acc;
      const add = y + r + 1;
      const sub = y - r;
      if (add < height) acc += tmp[add * width + x];
      if (sub >= 0) acc -= tmp[sub * width + x];
    }
  }
}

export default {
  id: 'shift-sad',
  summary: 'Example module plugin: windowed SAD, winner takes all (plain JavaScript)',
  version: '1',
  params: [
    { name: 'window', type: 'int', default: 5, min: 1, max: 31, odd: true, description: 'Window side in pixels (odd)' },
    { name: 'subpixel', type: 'boolean', default: true, description: 'Refine the winner with a parabola through the neighbouring costs' },
  ],

  match(input, params, signal) {
    const { width, height, left, right, minDisparity, maxDisparity } = input;
    const r = (params.window - 1) >> 1;
    const n = width * height;
    const diff = new Float32Array(n);
    const tmp = new Float32Array(n);
    const cost = new Float32Array(n);
    const best = new Float32Array(n).fill(Infinity);
    const bestD = new Float32Array(n).fill(NaN);
    // costs at d-1 and d+1 of the current winner, for the parabola
    const before = new Float32Array(n).fill(NaN);
    const after = new Float32Array(n).fill(NaN);
    const prev = new Float32Array(n).fill(NaN);

    for (let d = minDisparity; d <= maxDisparity; d++) {
      if (signal.aborted) throw new Error('aborted');
      for (let y = 0; y < height; y++) {
        const row = y * width;
        for (let x = 0; x < width; x++) {
          const xr = x - d;
          diff[row + x] = xr >= 0 && xr < width ? Math.abs(left[row + x] - right[row + xr]) : 0;
        }
      }
      boxSum(diff, width, height, r, tmp, cost);
      for (let i = 0; i < n; i++) {
        const x = i % width;
        const xr = x - d;
        const c = xr >= 0 && xr < width ? cost[i] : NaN;
        if (bestD[i] === d - 1) after[i] = c;
        if (c < best[i]) {
          best[i] = c;
          bestD[i] = d;
          before[i] = prev[i];
          after[i] = NaN;
        }
        prev[i] = c;
      }
    }

    const out = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      let d = bestD[i];
      if (params.subpixel && d === d) {
        const c0 = before[i];
        const c1 = best[i];
        const c2 = after[i];
        const den = c0 - 2 * c1 + c2;
        if (c0 === c0 && c2 === c2 && den > 0) d += (c0 - c2) / (2 * den);
      }
      out[i] = d;
    }
    return out;
  },
};
