// GET /api/studies/:study/sites/:site/participants/:participant/audit — the participant's item changes, newest first,
// filtered by ?form= &user= &item= &record= &from= &to= (YYYY-MM-DD), paged. Unblinded-only forms are left out for blinded readers.
import { withAuth, paging } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { getParticipant } from '@/lib/participants';
import { participantAuditFor } from '@/lib/crf/casebook';
import { AppError } from '@/lib/errors';
import { isValidDate } from '@/lib/schedule';

const date = (v: string | null) => {
  if (v === null || v === '') return undefined;
  if (!isValidDate(v)) throw new AppError('bad_request', 'Dates are written YYYY-MM-DD and must exist in the calendar.');
  return v;
};

export const GET = withAuth<{ study: string; site: string; participant: string }>(
  async ({ req, params, study, site, roles }) => {
    const p = await getParticipant(study!.id, site!.id, idParam(params.participant, 'The participant'));
    const sp = req.nextUrl.searchParams;
    const pg = paging(req, { pageSize: 50 });
    const user = sp.get('user');
    const record = sp.get('record');
    return {
      ...(await participantAuditFor(study!, p.id, roles, {
        formKey: sp.get('form') || undefined,
        userId: user ? idParam(user, 'The user') : undefined,
        recordId: record ? idParam(record, 'The record') : undefined,
        itemPath: sp.get('item')?.slice(0, 500) || undefined,
        from: date(sp.get('from')),
        to: date(sp.get('to')),
        ...pg,
      })),
      page: pg.page,
      pageSize: pg.pageSize,
      timeZone: site!.timeZone,
    };
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] },
);
