import type { Metadata } from 'next';
import Link from 'next/link';
import { requireUser } from '@/lib/auth/gates';
import { homeStudies } from '@/lib/studies/home';

export const metadata: Metadata = { title: 'Your studies' };

export default async function HomePage() {
  const p = await requireUser();
  const studies = homeStudies(p);
  return (
    <div className="flex flex-col gap-4">
      <h1>Your studies</h1>
      {studies.length === 0 && <p className="notice-warn">You hold no role in any study at the moment. Ask your study administrator.</p>}
      {studies.map((s) => (
        <section key={s.code} className="panel" aria-labelledby={`study-${s.code}`}>
          <h2 id={`study-${s.code}`} className="mb-2">
            <Link href={`/studies/${s.code}`}>{s.code}</Link> <span className="text-base font-normal text-ink-soft">{s.title}</span>
          </h2>
          <table>
            <thead>
              <tr>
                <th scope="col">Your role</th>
                <th scope="col">Site</th>
                <th scope="col">Open</th>
              </tr>
            </thead>
            <tbody>
              {s.entries.map((e) => (
                <tr key={`${e.role}-${e.siteCode ?? 'all'}`}>
                  <td>{e.roleLabel}</td>
                  <td>{e.siteCode ? `${e.siteCode} · ${e.siteName}` : 'All sites'}</td>
                  <td>
                    {e.siteCode ? (
                      <span className="flex gap-3">
                        <Link href={`/studies/${s.code}/sites/${e.siteCode}`}>Site {e.siteCode}</Link>
                        {(e.role === 'assessor' || e.role === 'coordinator') && <Link href={`/studies/${s.code}/worklist`}>Visits due</Link>}
                      </span>
                    ) : e.role === 'admin' ? (
                      <span className="flex gap-3">
                        <Link href={`/studies/${s.code}/admin/users`}>Users</Link>
                        <Link href={`/studies/${s.code}/admin/sites`}>Sites</Link>
                      </span>
                    ) : (
                      <Link href={`/studies/${s.code}`}>Study overview</Link>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ))}
    </div>
  );
}
