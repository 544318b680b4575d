export * from "./auth";
export * from "./mail";
export * from "./sites";
export * from "./imports";
export * from "./analysis";
export * from "./work";
export * from "./flights";
