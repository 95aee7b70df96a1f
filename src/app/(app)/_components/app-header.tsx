import Link from "next/link";
import { signOutAction } from "@/app/(auth)/sign-in/actions";
import { switchFacilityAction } from "@/app/(app)/actions";
import { NavLinks } from "@/components/nav-links";

interface Props {
  facilityName: string;
  userName: string;
  role: string;
  nav: Array<{ href: string; label: string }>;
  facilities: Array<{ facilityId: string; facilityName: string; role: string }>;
  currentFacilityId: string;
}

const ROLE_LABEL: Record<string, string> = {
  admin: "Facility admin",
  staff: "Facility staff",
  researcher: "Researcher",
  engineer: "Service engineer",
};

export function AppHeader({ facilityName, userName, role, nav, facilities, currentFacilityId }: Props) {
  return (
    <header className="border-b border-paper-line bg-paper-card print:hidden">
      <div className="mx-auto flex max-w-7xl items-center gap-6 px-6 py-3">
        <Link href="/dashboard" className="flex items-center gap-2 text-ink no-underline">
          <img src="/icon.svg" alt="" width={24} height={24} />
          <span className="font-semibold">Beadbench</span>
        </Link>
        <div className="text-sm text-ink-soft" data-testid="facility-name">
          {facilities.length > 1 ? (
            <form action={switchFacilityAction} className="flex items-center gap-1">
              <select name="facilityId" defaultValue={currentFacilityId} className="field w-auto py-1">
                {facilities.map((f) => (
                  <option key={f.facilityId} value={f.facilityId}>
                    {f.facilityName}
                  </option>
                ))}
              </select>
              <button className="btn-quiet py-1">Switch</button>
            </form>
          ) : (
            facilityName
          )}
        </div>
        <NavLinks items={nav} />
        <div className="ml-auto flex items-center gap-3 text-sm">
          <div className="text-right leading-tight">
            <div className="font-semibold" data-testid="user-name">
              {userName}
            </div>
            <div className="text-xs text-ink-soft" data-testid="user-role">
              {ROLE_LABEL[role] ?? role}
            </div>
          </div>
          <form action={signOutAction}>
            <button className="btn-quiet">Sign out</button>
          </form>
        </div>
      </div>
    </header>
  );
}
