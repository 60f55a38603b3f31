export * from "./constants.js";
export * from "./distances.js";
