/**
 * Angular separation and position angle by the Vincenty form (special case of a sphere,
 * Vincenty 1975; Meeus 1998 ch. 17): atan2 of the cross and dot products, stable from
 * 0 to 180 degrees. The cosine law loses all precision below ~0.01 arcsec (domain reference §1).
 */
import { DEG, RAD } from "./angles.js";

/** Separation in degrees of (lon1, lat1) and (lon2, lat2), all in degrees. */
export function separationDeg(lon1Deg: number, lat1Deg: number, lon2Deg: number, lat2Deg: number): number {
  return separationRad(lon1Deg * DEG, lat1Deg * DEG, lon2Deg * DEG, lat2Deg * DEG) * RAD;
}

/** Separation in radians; inputs in radians. */
export function separationRad(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const dl = lon2 - lon1;
  const s1 = Math.sin(lat1);
  const c1 = Math.cos(lat1);
  const s2 = Math.sin(lat2);
  const c2 = Math.cos(lat2);
  const sdl = Math.sin(dl);
  const cdl = Math.cos(dl);
  const num = Math.hypot(c2 * sdl, c1 * s2 - s1 * c2 * cdl);
  const den = s1 * s2 + c1 * c2 * cdl;
  return Math.atan2(num, den);
}

/**
 * Position angle in degrees of point 2 as seen from point 1, east of north, in [0, 360).
 * (Standard form, e.g. Meeus 1998 ch. 17; atan2 keeps it defined everywhere but at the poles.)
 */
export function positionAngleDeg(lon1Deg: number, lat1Deg: number, lon2Deg: number, lat2Deg: number): number {
  const l1 = lon1Deg * DEG;
  const b1 = lat1Deg * DEG;
  const l2 = lon2Deg * DEG;
  const b2 = lat2Deg * DEG;
  const dl = l2 - l1;
  const y = Math.sin(dl) * Math.cos(b2);
  const x = Math.cos(b1) * Math.sin(b2) - Math.sin(b1) * Math.cos(b2) * Math.cos(dl);
  let pa = Math.atan2(y, x) * RAD;
  if (pa < 0) pa += 360;
  return pa >= 360 ? pa - 360 : pa;
}
