// Types for the one d3-geo-projection export the report uses (the package ships none).
declare module "d3-geo-projection" {
  import type { GeoProjection } from "d3";
  export function geoHammer(): GeoProjection;
}
