import type { AstroGlobal } from 'astro';
import { db } from './db';
import { pageMember } from './page-guard';
import { isUuid, type Action } from './permissions';
import type { SessionMember } from './auth';

export interface ShootHeader {
  id: string;
  title: string;
  stage: string;
  shot_on: string;
  allowance: number;
  extra_price_minor: number;
  currency: string;
  tax_rate_bp: number;
  tax_mode: 'exclusive' | 'inclusive';
  proof_expires_at: string;
  download_until: string | null;
  picks_submitted_at: string | null;
  link_sent_at: string | null;
  link_revoked_at: string | null;
  has_link: boolean;
  has_passcode: boolean;
  client_id: string;
  client_name: string;
  client_email: string;
  studio_id: string;
  light_notes: unknown;
  /** Ready finals the client has been e-mailed about. */
  announced_finals: number;
}

/** For shoot pages: the member and the shoot of their studio, or the response to send instead. */
export async function shootPage(astro: AstroGlobal, action: Action): Promise<{ member: SessionMember; shoot: ShootHeader } | Response> {
  const member = await pageMember(astro, action);
  if (member instanceof Response) return member;
  const id = astro.params.shootId;
  const shoot = isUuid(id)
    ? await db()('shoots as s').join('clients as c', 'c.id', 's.client_id')
        .where({ 's.id': id, 's.studio_id': member.studioId })
        .first('s.*', 'c.name as client_name', 'c.email as client_email',
          db().raw('(s.link_token_hash IS NOT NULL AND s.link_revoked_at IS NULL) AS has_link'), db().raw('(s.passcode_hash IS NOT NULL) AS has_passcode'))
    : null;
  if (!shoot) return astro.rewrite('/404');
  delete shoot.link_token_hash;
  delete shoot.passcode_hash;
  return { member, shoot };
}
