/** The problem form's model lives with the problem format (app/engine/problem/form.ts); re-exported for the pages. */
export * from "~/engine/problem/form";
