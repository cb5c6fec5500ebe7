/** The order fit is numerical (app/engine/analysis/convergence-order.ts); re-exported for the pages. */
export * from "~/engine/analysis/convergence-order";
