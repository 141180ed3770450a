import type { Metadata } from "next";
import type { ReactNode } from "react";
import Link from "next/link";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "PhenoPool", template: "%s · PhenoPool" },
  description: "Pooling the fitness cost of phenological mismatch across a network of nest-box studies.",
};

export default function RootLayout({ children }: { children: ReactNode }) {
  return (
    <html lang="en">
      <body>
        <header className="masthead">
          <Link href="/" className="wordmark">
            Pheno<span>Pool</span>
          </Link>
          <nav aria-label="Main">
            <Link href="/">Network</Link>
          </nav>
          <span className="tagline">Mismatch costs, pooled across sites and species</span>
        </header>
        <main>{children}</main>
      </body>
    </html>
  );
}
