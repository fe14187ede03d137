// Signing a browser in: the person pastes an API token once; it is kept in an HttpOnly, SameSite=Strict
// cookie that the access middleware reads like a bearer token. Signing out clears it.
import type { Hono } from 'hono';
import { deleteCookie, setCookie } from 'hono/cookie';
import type { Db } from '../../db/connection.ts';
import { findActiveToken } from '../../db/tokens.ts';
import { hashTokenSecret } from '../../auth/tokens.ts';
import { TOKEN_COOKIE } from '../../auth/middleware.ts';
import { Layout } from '../components/layout.tsx';

/** Only a path of this site may be the place to return to (no open redirect). */
export function safeNext(next: string | undefined): string {
  return next && /^\/(?!\/)[\w\-./?=&%]*$/.test(next) && !next.startsWith('/sign-') ? next : '/mills';
}

function SignInForm(props: { next: string; problem?: string }) {
  return (
    <Layout title="Sign in" section="mills" charts={false}>
      <h1>Sign in</h1>
      <p class="lead">This service is protected by API tokens. Paste the token you were given (`endquench token create` prints it once).</p>
      {props.problem ? (
        <p class="notice" role="alert">
          {props.problem}
        </p>
      ) : null}
      <form method="post" action="/sign-in" class="card">
        <input type="hidden" name="next" value={props.next} />
        <label>
          Token
          <input type="password" name="token" autocomplete="off" required />
        </label>
        <button type="submit">Sign in</button>
      </form>
    </Layout>
  );
}

export function signInPages(app: Hono<any>, db: Db): void {
  app.get('/sign-in', (c) => c.html(<SignInForm next={safeNext(c.req.query('next'))} />));
  app.post('/sign-in', async (c) => {
    const form = await c.req.parseBody();
    const token = typeof form.token === 'string' ? form.token.trim() : '';
    const next = safeNext(typeof form.next === 'string' ? form.next : undefined);
    const found = token ? await findActiveToken(db, hashTokenSecret(token)) : null;
    if (!found) return c.html(<SignInForm next={next} problem="That token is not valid: unknown or revoked." />, 401);
    setCookie(c, TOKEN_COOKIE, token, { httpOnly: true, sameSite: 'Strict', path: '/', secure: new URL(c.req.url).protocol === 'https:' });
    return c.redirect(next, 303);
  });
  app.post('/sign-out', (c) => {
    deleteCookie(c, TOKEN_COOKIE, { path: '/' });
    return c.redirect('/sign-in', 303);
  });
}
