import type { ReactNode } from 'react';

/**
 * A link to a case report form page. A plain anchor on purpose, not next/link: the form page needs its own
 * Content-Security-Policy (the only one allowing 'unsafe-eval', for the browser-side schema compiler), and a
 * client-side navigation would keep the policy of the page the link is on, so the form could not validate.
 */
export function FormLink({ href, children, className, ariaLabel }: { href: string; children: ReactNode; className?: string; ariaLabel?: string }) {
  return (
    <a href={href} className={className} aria-label={ariaLabel}>
      {children}
    </a>
  );
}
