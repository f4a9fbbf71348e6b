// GET /api/me — the signed-in person and their current memberships.
import { withAuth } from '@/lib/http/handler';

export const GET = withAuth(async ({ principal }) => ({ id: principal.id, name: principal.name, email: principal.email, memberships: principal.memberships }), { scope: 'user', roles: 'any' });
