/**
 * The role matrix of DESIGN.md §7 as data, plus the helpers every server entry uses.
 * "own" and "assigned" cells need a second check on the row itself (who created it,
 * or which instruments an engineer's current visit covers); services do that.
 */
import { AppError } from "../http/errors";

export const ROLES = ["admin", "staff", "researcher", "engineer"] as const;
export type Role = (typeof ROLES)[number];

export type Grant = "yes" | "own" | "assigned" | "no";

export const PERMISSIONS = {
  "people.manage": { admin: "yes", staff: "no", researcher: "no", engineer: "no" },
  "tolerances.manage": { admin: "yes", staff: "no", researcher: "no", engineer: "no" },
  "baselines.manage": { admin: "yes", staff: "yes", researcher: "no", engineer: "no" },
  "instruments.manage": { admin: "yes", staff: "yes", researcher: "no", engineer: "no" },
  "measurements.routine": { admin: "yes", staff: "yes", researcher: "no", engineer: "no" },
  "measurements.sample": { admin: "yes", staff: "yes", researcher: "own", engineer: "no" },
  "measurements.service": { admin: "yes", staff: "yes", researcher: "no", engineer: "assigned" },
  "logbooks.read": { admin: "yes", staff: "yes", researcher: "yes", engineer: "assigned" },
  "instruments.read": { admin: "yes", staff: "yes", researcher: "yes", engineer: "assigned" },
  "planner.use": { admin: "yes", staff: "yes", researcher: "yes", engineer: "yes" },
  "settings.open": { admin: "yes", staff: "yes", researcher: "no", engineer: "no" },
  "tokens.own": { admin: "yes", staff: "yes", researcher: "yes", engineer: "yes" },
  "stacks.upload": { admin: "yes", staff: "yes", researcher: "yes", engineer: "assigned" },
  "stacks.delete": { admin: "yes", staff: "yes", researcher: "no", engineer: "no" },
} as const satisfies Record<string, Record<Role, Grant>>;

export type Permission = keyof typeof PERMISSIONS;

/** Who is acting: built from a session or an API token, or by the worker from a job. */
export interface Actor {
  userId: string;
  facilityId: string;
  role: Role;
  via: "session" | "token" | "worker";
}

export function grantFor(role: Role, permission: Permission): Grant {
  return PERMISSIONS[permission][role];
}

/** True when the role has the permission at all (fully or for own/assigned rows). */
export function can(actor: Pick<Actor, "role">, permission: Permission): boolean {
  return grantFor(actor.role, permission) !== "no";
}

/** Throws 403 unless the actor's role has the permission (at least partly). */
export function requirePermission(actor: Actor, permission: Permission): Grant {
  const grant = grantFor(actor.role, permission);
  if (grant === "no") {
    throw new AppError("forbidden", `Your role (${actor.role}) cannot do this: ${permission}.`);
  }
  return grant;
}

/** Which top-level sections a role sees in the navigation. */
export function navigationFor(role: Role): Array<{ href: string; label: string }> {
  const items = [
    { href: "/dashboard", label: "Dashboard" },
    { href: "/instruments", label: "Instruments" },
    { href: "/stacks", label: "Stacks" },
    { href: "/planner", label: "Medium planner" },
    { href: "/service-visits", label: "Service visits" },
    { href: "/settings", label: "Settings" },
  ];
  return items.filter((i) => {
    if (i.href === "/settings") return can({ role }, "settings.open");
    if (i.href === "/service-visits") return role !== "researcher";
    if (i.href === "/stacks") return can({ role }, "stacks.upload");
    return true;
  });
}
