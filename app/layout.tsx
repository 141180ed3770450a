import type { Metadata } from "next";
import type { ReactNode } from "react";
import Link from "next/link";
import "./globals.css";
import { currentActor, mayDo } from "./_server/current-actor";
import { signOutAction } from "./sign-in/actions";

export const metadata: Metadata = {
  title: { default: "PhenoPool", template: "%s · PhenoPool" },
  description: "Pooling the fitness cost of phenological mismatch across a network of nest-box studies.",
};

/** Pages in the main navigation, each shown to those the policy lets use it (the pages check again). */
const NAV = [
  { href: "/admin/users", label: "Accounts", action: "user.manage" },
  { href: "/admin/audit", label: "Audit trail", action: "audit.read" },
  { href: "/admin/settings", label: "Settings", action: "settings.manage" },
  { href: "/account/tokens", label: "API tokens", action: "token.manage_own" },
] as const;

export default async function RootLayout({ children }: { children: ReactNode }) {
  const actor = await currentActor();
  const links = actor.kind === "user" ? (await Promise.all(NAV.map(async (item) => ((await mayDo(actor, item.action)) ? item : null)))).filter((item) => item !== null) : [];
  return (
    <html lang="en">
      <body>
        <header className="masthead">
          <Link href="/" className="wordmark">
            Pheno<span>Pool</span>
          </Link>
          <nav aria-label="Main">
            <Link href="/">Network</Link>
            <Link href="/analyses">Analyses</Link>
            {links.map((item) => (
              <Link key={item.href} href={item.href}>{item.label}</Link>
            ))}
          </nav>
          <span className="tagline">Mismatch costs, pooled across sites and species</span>
          {actor.kind === "user" ? (
            <div className="account">
              <span>{actor.label.replace(/ <.*>$/, "")} ({actor.role?.replace("_", " ")})</span>
              <form action={signOutAction}>
                <button type="submit" className="quiet">Sign out</button>
              </form>
              <form action={signOutAction}>
                <input type="hidden" name="everywhere" value="yes" />
                <button type="submit" className="quiet">Sign out everywhere</button>
              </form>
            </div>
          ) : null}
        </header>
        <main>{children}</main>
      </body>
    </html>
  );
}
