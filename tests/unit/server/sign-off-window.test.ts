import { describe, expect, it } from "vitest";
import type { Actor, Role } from "@/server/auth/permissions";
import { maySignOffNow } from "@/server/services/service-visits";

const actor = (role: Role): Actor => ({ userId: "u", facilityId: "f", role, via: "session" });
const visit = { startsAt: new Date("2026-11-10T08:00:00Z"), endsAt: new Date("2026-11-12T23:59:59Z") };

// Source: DESIGN.md §7 — an engineer acts on the assigned instrument during the visit window only;
// signing off stays with the facility's staff and admins at any time.
describe("who may sign off a service visit now", () => {
  it("lets the engineer sign off only inside the visit's window, ends included", () => {
    expect(maySignOffNow(actor("engineer"), visit, new Date("2026-11-09T23:00:00Z"))).toBe(false);
    expect(maySignOffNow(actor("engineer"), visit, visit.startsAt)).toBe(true);
    expect(maySignOffNow(actor("engineer"), visit, new Date("2026-11-11T12:00:00Z"))).toBe(true);
    expect(maySignOffNow(actor("engineer"), visit, visit.endsAt)).toBe(true);
    expect(maySignOffNow(actor("engineer"), visit, new Date("2026-11-13T00:00:00Z"))).toBe(false);
  });

  it("lets admins and staff sign off at any time, researchers never", () => {
    const later = new Date("2027-01-01T00:00:00Z");
    expect(maySignOffNow(actor("admin"), visit, later)).toBe(true);
    expect(maySignOffNow(actor("staff"), visit, later)).toBe(true);
    expect(maySignOffNow(actor("researcher"), visit, new Date("2026-11-11T12:00:00Z"))).toBe(false);
  });
});
