/** The public barrel of peculiar: one export line per area; each area's index lists its modules. */
export * from "./errors.js";
export * from "./sky/index.js";
export * from "./catalogue/index.js";
export * from "./crossmatch/index.js";
export * from "./cosmology/index.js";
export * from "./flow/index.js";
export * from "./pipeline/index.js";
export * from "./server/index.js";
