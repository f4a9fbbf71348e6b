import 'server-only';
import { lockState } from '@/lib/lock';
import { Op, UniqueConstraintError } from 'sequelize';
import { Participant, ReminderLog, Site, Visit } from '@/models';
import { memberEmails } from '@/lib/users/recipients';
import { sendMail } from '@/lib/mail';
import { logger } from '@/lib/log';
import { addDays } from '@/lib/schedule';
import { todayIn } from '@/lib/dates';
import { config } from '@/lib/config';

type Kind = 'window_open' | 'closing_soon' | 'overdue';

/** Which reminders a visit is due for today (pure). The closing reminder goes two days before the window closes. */
export function dueReminders(v: { blinded: boolean; required: boolean; earliest: string; latest: string; completedOn: string | null }, today: string): Kind[] {
  if (v.completedOn) return [];
  const out: Kind[] = [];
  if (v.blinded && today >= v.earliest && today <= v.latest) out.push('window_open');
  if (v.blinded && today >= addDays(v.latest, -2) && today <= v.latest) out.push('closing_soon');
  if (v.required && today > v.latest) out.push('overdue');
  return out;
}

/**
 * Sends the reminders due now: assessors when a blinded visit window opens and two days before it closes,
 * coordinators when a visit is overdue. The sent-log (unique visit × kind) makes a second run send nothing new.
 * Blinded messages carry the study ID, visit and window only: nothing that reveals an arm.
 */
export async function runReminders(now = new Date()): Promise<{ sent: number; skipped: number }> {
  let sent = 0;
  let skipped = 0;
  const sites = await Site.findAll();
  for (const site of sites) {
    // Nothing can be entered at a locked site (soft or hard, its own or the study's), so nobody is asked to.
    if ((await lockState(site.studyId, site.id)).level !== 'open') continue;
    const today = todayIn(site.timeZone, now);
    const visits = await Visit.findAll({ where: { siteId: site.id, completedOn: { [Op.is]: null }, earliest: { [Op.lte]: today } }, include: [{ model: Participant, as: 'participant', attributes: ['subjectCode'] }] });
    for (const v of visits) {
      for (const kind of dueReminders(v, today)) {
        if (await ReminderLog.findOne({ where: { visitId: v.id, kind } })) {
          skipped++;
          continue;
        }
        const to = await memberEmails(v.studyId, site.id, [kind === 'overdue' ? 'coordinator' : 'assessor']);
        if (!to.length) continue;
        const code = (v as unknown as { participant: Participant }).participant.subjectCode ?? `participant ${v.participantId}`;
        try {
          // Claim first: a concurrent run that loses the unique key sends nothing.
          await ReminderLog.create({ visitId: v.id, kind, recipients: to, sentAt: now });
        } catch (e) {
          if (e instanceof UniqueConstraintError) {
            skipped++;
            continue;
          }
          throw e;
        }
        const subject =
          kind === 'window_open' ? `Excursion: ${v.label} window open for ${code}` : kind === 'closing_soon' ? `Excursion: ${v.label} window for ${code} closes on ${v.latest}` : `Excursion: ${v.label} overdue for ${code}`;
        const text =
          `${code} at ${site.code}: ${v.label}, window ${v.earliest} to ${v.latest} (target ${v.target}).\n` +
          (kind === 'overdue' ? 'The window has passed and the visit is not recorded. Please arrange it or record why it was missed.\n' : 'Please arrange the blinded assessment within the window.\n') +
          `\n${config.baseUrl()}/studies\n`;
        try {
          await sendMail({ to, subject, text });
          sent++;
        } catch (e) {
          // Leave the claim in place only for messages that went out.
          await ReminderLog.destroy({ where: { visitId: v.id, kind } });
          logger.error({ err: String(e), visitId: v.id, kind }, 'reminder e-mail failed');
        }
      }
    }
  }
  return { sent, skipped };
}
