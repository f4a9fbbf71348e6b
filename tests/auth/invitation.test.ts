// Invitation by e-mail: invite → message captured by the SMTP fake → set password through the link
// → sign in; a reused or expired link is refused, and a weak password is refused without using the link.
import { describe, it, expect } from 'vitest';
import { Client, DEMO, signedIn } from '../support/http';
import { waitForMail } from '../support/mail';
import { uniq } from '../support/factories';
import { Invitation, User } from '@/models';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';

const linkIn = (text: string) => {
  const m = /\/invite\/([A-Za-z0-9_-]{20,})/.exec(text);
  if (!m) throw new Error(`no link in: ${text}`);
  return m[1];
};

async function invite(role = 'coordinator', site: string | null = 'KVH') {
  const admin = await signedIn(DEMO.admin);
  const email = `${uniq('invitee')}@test.example`;
  const r = await admin.post('/api/studies/TEMPO-FT/invitations', { email, name: 'Nia Invitee', role, site });
  expect(r.status).toBe(200);
  expect(r.body.emailSent).toBe(true);
  const mail = await waitForMail(email, (m) => m.subject.includes('your account'));
  return { admin, email, token: linkIn(mail.text), mail, userId: r.body.userId as number };
}

describe('invitations', () => {
  it('invite → e-mail → set password → sign in, and the link cannot be used again', async () => {
    const { email, token, mail } = await invite();
    expect(mail.text).toContain('Site coordinator at KVH');
    expect(mail.text).toContain('expires in 72 hours');
    const anon = new Client();
    const page = await anon.page(`/invite/${token}`);
    expect(page.status).toBe(200);
    expect(page.html).toContain(email);
    const accepted = await anon.post('/api/invitations/accept', { token, password: 'a-long-enough-password' });
    expect(accepted.status).toBe(200);
    expect((await new Client().signIn(email, 'a-long-enough-password')).ok).toBe(true);
    const again = await anon.post('/api/invitations/accept', { token, password: 'another-long-password' });
    expect(again.status).toBe(410);
    expect(again.body.error.message).toMatch(/already been used/);
    // The reused link did not change the password.
    expect((await new Client().signIn(email, 'another-long-password')).ok).toBe(false);
    expect((await anon.page(`/invite/${token}`)).html).toContain('already been used');
  });

  it('stores only a hash of the token, and the link expires after 72 hours', async () => {
    const { token, userId } = await invite('assessor', 'NPU');
    const inv = await Invitation.findOne({ where: { userId } });
    expect(inv!.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(inv!.tokenHash).not.toContain(token);
    const hours = (inv!.expiresAt.getTime() - inv!.createdAt.getTime()) / 3600_000;
    expect(hours).toBeCloseTo(72, 3);
    await inv!.update({ expiresAt: new Date(Date.now() - 1000) });
    const r = await new Client().post('/api/invitations/accept', { token, password: 'a-long-enough-password' });
    expect(r.status).toBe(410);
    expect(r.body.error.message).toMatch(/expired/);
    expect((await User.findByPk(userId))!.status).toBe('invited');
  });

  it('refuses a short password with a field message and leaves the link usable', async () => {
    const { token } = await invite('therapist', 'MLB');
    const r = await new Client().post('/api/invitations/accept', { token, password: 'short' });
    expect(r.status).toBe(400);
    expect(r.body.error.fields.password).toMatch(/at least 12 characters/);
    expect((await new Client().post('/api/invitations/accept', { token, password: 'now-a-long-password' })).status).toBe(200);
  });

  it('refuses an unknown link with 404', async () => {
    const r = await new Client().post('/api/invitations/accept', { token: 'x'.repeat(43), password: 'a-long-enough-password' });
    expect(r.status).toBe(404);
  });

  it('a resent link replaces the earlier one', async () => {
    const { admin, email, token, userId } = await invite('coordinator', 'NPU');
    const r = await admin.post(`/api/studies/TEMPO-FT/users/${userId}/invitations`, {});
    expect(r.status).toBe(200);
    const second = await waitForMail(email, (m) => !m.text.includes(token));
    const newToken = linkIn(second.text);
    expect((await new Client().post('/api/invitations/accept', { token, password: 'a-long-enough-password' })).status).toBe(410);
    expect((await new Client().post('/api/invitations/accept', { token: newToken, password: 'a-long-enough-password' })).status).toBe(200);
  });

  it('audits the invitation in the same transaction as the account and membership', async () => {
    const { userId } = await invite('coordinator', 'HHC');
    const rows = await sequelize.query<{ entity_type: string; action: string }>(
      "SELECT entity_type, action FROM audit_events WHERE (entity_type = 'user' AND entity_id = ?) OR (entity_type = 'membership' AND new_value LIKE ?) ORDER BY id",
      { replacements: [String(userId), `%"userId":${userId},%`], type: QueryTypes.SELECT },
    );
    expect(rows).toEqual([
      { entity_type: 'user', action: 'create' },
      { entity_type: 'membership', action: 'create' },
    ]);
  });

  it('refuses a site role without a site, and a study-wide role with one', async () => {
    const admin = await signedIn(DEMO.admin);
    const a = await admin.post('/api/studies/TEMPO-FT/invitations', { email: `${uniq()}@test.example`, name: 'No Site', role: 'coordinator', site: null });
    expect(a.status).toBe(400);
    expect(a.body.error.fields.site).toBeTruthy();
    const b = await admin.post('/api/studies/TEMPO-FT/invitations', { email: `${uniq()}@test.example`, name: 'Has Site', role: 'statistician', site: 'HHC' });
    expect(b.status).toBe(400);
  });
});
