/** Small seeded random landscapes for property tests: a few hills and a ridge on a plain, metres. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function bumpyDem(seed: number, width: number, height: number): Float32Array {
  const rnd = mulberry32(seed);
  const hills = Array.from({ length: 6 }, () => ({
    x: rnd() * width,
    y: rnd() * height,
    r: 3 + rnd() * width * 0.2,
    h: 50 + rnd() * 600,
  }));
  const ridge = {
    x0: rnd() * width,
    y0: rnd() * height,
    ang: rnd() * Math.PI,
    h: 100 + rnd() * 400,
    w: 1 + rnd() * 3,
  };
  const base = rnd() * 200;
  const out = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      let z = base;
      for (const k of hills) z += k.h * Math.exp(-((c - k.x) ** 2 + (r - k.y) ** 2) / (k.r * k.r));
      const d = Math.abs((c - ridge.x0) * Math.sin(ridge.ang) - (r - ridge.y0) * Math.cos(ridge.ang));
      z += ridge.h * Math.max(0, 1 - d / ridge.w);
      out[r * width + c] = z;
    }
  }
  return out;
}
