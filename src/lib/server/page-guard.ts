import type { AstroGlobal } from 'astro';
import { can, type Action } from './permissions';
import type { SessionMember } from './auth';

/** For pages: the member allowed to do `action`, or the response to send instead (sign-in or 403). */
export async function pageMember(astro: AstroGlobal, action: Action): Promise<SessionMember | Response> {
  const member = astro.locals.member;
  if (!member) return astro.redirect(`/signin?next=${encodeURIComponent(astro.url.pathname + astro.url.search)}`);
  if (!can(member, action)) return astro.rewrite('/forbidden');
  return member;
}
