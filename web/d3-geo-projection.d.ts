// Types for the d3-geo-projection exports the view uses (the package ships none).
declare module "d3-geo-projection" {
  import type { GeoProjection } from "d3";
  export function geoHammer(): GeoProjection;
  export function geoMollweide(): GeoProjection;
}
