import type { ReactNode } from "react";
import { requirePageActor } from "@/server/auth/current-actor";
import { navigationFor } from "@/server/auth/permissions";
import { AppHeader } from "./_components/app-header";

export default async function AppLayout({ children }: { children: ReactNode }) {
  const ctx = await requirePageActor();
  return (
    <div className="min-h-screen">
      <AppHeader
        facilityName={ctx.facilityName}
        userName={ctx.user.name}
        role={ctx.actor.role}
        nav={navigationFor(ctx.actor.role)}
        facilities={ctx.facilities}
        currentFacilityId={ctx.actor.facilityId}
      />
      <main className="mx-auto max-w-7xl px-6 py-6">{children}</main>
    </div>
  );
}
