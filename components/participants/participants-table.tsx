'use client';
import { useState } from 'react';
import Link from 'next/link';
import useSWR from 'swr';
import { getJson } from '@/components/fetcher';
import { Pager } from '@/components/pager';
import { participantStatusLabel } from '@/lib/participants/labels';

type Row = { id: number; screeningNumber: string; subjectCode: string | null; status: string; unblinded: boolean; createdAt: string; arm?: string | null };

/** The site's participants, paged on the server; the arm column exists only when the server sends arms (unblinded readers). */
export function ParticipantsTable({ study, site }: { study: string; site: string }) {
  const [page, setPage] = useState(1);
  const base = `/api/studies/${study}/sites/${site}/participants`;
  const { data, error } = useSWR<{ rows: Row[]; total: number; page: number; pageSize: number; showsArm: boolean }>(`${base}?page=${page}`, getJson);

  return (
    <div className="flex flex-col gap-3">
      {error && <p role="alert" className="notice-error">{error.message}</p>}
      {data && (
        <section className="panel">
          <table>
            <thead>
              <tr><th scope="col">Screening number</th><th scope="col">Study ID</th><th scope="col">Status</th>{data.showsArm && <th scope="col">Arm</th>}<th scope="col">Registered</th></tr>
            </thead>
            <tbody>
              {data.rows.map((p) => (
                <tr key={p.id}>
                  <td className="font-mono"><Link href={`/studies/${study}/sites/${site}/participants/${p.id}`}>{p.screeningNumber}</Link></td>
                  <td className="font-mono">{p.subjectCode ?? '—'}</td>
                  <td>{participantStatusLabel(p.status)}{p.unblinded && <span className="tag ml-1">unblinded</span>}</td>
                  {data.showsArm && <td>{p.arm ?? '—'}</td>}
                  <td>{p.createdAt.slice(0, 10)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={setPage} />
        </section>
      )}
    </div>
  );
}
