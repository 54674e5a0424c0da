/**
 * The CIEDE2000 colour difference (CIE 142-2001), written from the equations as set out by
 * Sharma, Wu and Dalal (2005), "The CIEDE2000 color-difference formula: implementation notes,
 * supplementary test data, and mathematical observations", Color Res. Appl. 30(1), including
 * their notes: hue angles of zero-chroma colours are 0, the mean hue takes the shorter arc, and
 * the hue difference is 0 when either chroma is 0.
 */
import type { Lab } from "./space";

const RAD = Math.PI / 180;
const POW25_7 = 25 ** 7;

function hueDeg(b: number, a: number): number {
  if (a === 0 && b === 0) return 0;
  const h = Math.atan2(b, a) / RAD;
  return h < 0 ? h + 360 : h;
}

/**
 * ΔE00 between two CIELAB colours, parametric factors kL = kC = kH = 1 unless given.
 * Example: deltaE2000([50, 2.6772, -79.7751], [50, 0, -82.7485]) → 2.0425 (pair 1 of the paper).
 */
export function deltaE2000(lab1: Lab | readonly number[], lab2: Lab | readonly number[], kL = 1, kC = 1, kH = 1): number {
  const [L1, a1, b1] = lab1 as Lab;
  const [L2, a2, b2] = lab2 as Lab;
  // 1. C'i, h'i: a* stretched by G, which depends on the mean chroma
  const Cab = (Math.hypot(a1, b1) + Math.hypot(a2, b2)) / 2;
  const Cab7 = Cab ** 7;
  const G = 0.5 * (1 - Math.sqrt(Cab7 / (Cab7 + POW25_7)));
  const a1p = (1 + G) * a1;
  const a2p = (1 + G) * a2;
  const C1p = Math.hypot(a1p, b1);
  const C2p = Math.hypot(a2p, b2);
  const h1p = hueDeg(b1, a1p);
  const h2p = hueDeg(b2, a2p);

  // 2. ΔL', ΔC', ΔH'
  const dLp = L2 - L1;
  const dCp = C2p - C1p;
  let dhp = 0;
  if (C1p * C2p !== 0) {
    dhp = h2p - h1p;
    if (dhp > 180) dhp -= 360;
    else if (dhp < -180) dhp += 360;
  }
  const dHp = 2 * Math.sqrt(C1p * C2p) * Math.sin((dhp / 2) * RAD);

  // 3. weighting functions
  const Lbp = (L1 + L2) / 2;
  const Cbp = (C1p + C2p) / 2;
  let hbp = h1p + h2p;
  if (C1p * C2p !== 0) {
    if (Math.abs(h1p - h2p) <= 180) hbp = (h1p + h2p) / 2;
    else if (h1p + h2p < 360) hbp = (h1p + h2p + 360) / 2;
    else hbp = (h1p + h2p - 360) / 2;
  }
  const T =
    1 -
    0.17 * Math.cos((hbp - 30) * RAD) +
    0.24 * Math.cos(2 * hbp * RAD) +
    0.32 * Math.cos((3 * hbp + 6) * RAD) -
    0.2 * Math.cos((4 * hbp - 63) * RAD);
  const dTheta = 30 * Math.exp(-(((hbp - 275) / 25) ** 2));
  const Cbp7 = Cbp ** 7;
  const RC = 2 * Math.sqrt(Cbp7 / (Cbp7 + POW25_7));
  const Lm50 = (Lbp - 50) ** 2;
  const SL = 1 + (0.015 * Lm50) / Math.sqrt(20 + Lm50);
  const SC = 1 + 0.045 * Cbp;
  const SH = 1 + 0.015 * Cbp * T;
  const RT = -Math.sin(2 * dTheta * RAD) * RC;

  const tl = dLp / (kL * SL);
  const tc = dCp / (kC * SC);
  const th = dHp / (kH * SH);
  return Math.sqrt(tl * tl + tc * tc + th * th + RT * tc * th);
}
