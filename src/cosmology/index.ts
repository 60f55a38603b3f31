export * from "./constants.js";
export * from "./distances.js";
export * from "./restframes.js";
