export * from "./mock.js";
