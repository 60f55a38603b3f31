export * from "./angles.js";
export * from "./vectors.js";
export * from "./separation.js";
export * from "./frames.js";
export * from "./sexagesimal.js";
