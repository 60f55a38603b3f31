export * from "./constants.js";
export * from "./distances.js";
export * from "./restframes.js";
export * from "./distance-indicators.js";
export * from "./estimators.js";
export * from "./zeropoint.js";
export * from "./velocities.js";
export * from "./combine.js";
