/** Role order shared by the server guards and the UI (which only hides; the server decides). */
import type { Role } from "~/db/schema";

export const ROLE_RANK: Record<Role, number> = { viewer: 0, engineer: 1, admin: 2 };

export function roleAtLeast(role: Role, min: Role): boolean {
  return ROLE_RANK[role] >= ROLE_RANK[min];
}

export const ROLE_DESCRIPTIONS: Record<Role, string> = {
  viewer: "Reads every run, result, problem and regression.",
  engineer: "Also starts runs, triages regressions and adds problems.",
  admin: "Also manages users, roles, API tokens and thresholds.",
};
