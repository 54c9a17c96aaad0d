import { LitElement, css, html, nothing } from 'lit';
import { api } from './api.js';

/**
 * The sign-in box for a server that needs a key: the team token or a personal
 * key (`snk_…`, which also names who signs reviews). Posting it sets an
 * HttpOnly cookie; the key itself is never stored by the client.
 *
 * @fires sn-signed-in - the server accepted the key
 */
export class SnSignin extends LitElement {
  static override styles = css`
    :host { display: block; }
    form { max-width: 360px; margin: 12vh auto; background: #fff; border: 1px solid #c8c4bb; border-radius: 6px; padding: 18px 22px; }
    h2 { margin: 0 0 6px; font-size: 16px; color: #1d3a4a; }
    p { font-size: 13px; color: #4a5258; }
    input { font: inherit; width: 100%; box-sizing: border-box; padding: 5px 7px; border: 1px solid #c8c4bb; border-radius: 3px; }
    button { margin-top: 10px; font: inherit; padding: 4px 14px; background: #1d3a4a; color: #fff; border: none; border-radius: 3px; cursor: pointer; }
    .err { color: #b3261e; }
  `;

  static override properties = { error: { state: true }, busy: { state: true } };

  declare private error: string;
  declare private busy: boolean;

  constructor() {
    super();
    this.error = '';
    this.busy = false;
  }

  override render() {
    return html`<form @submit=${this.onSubmit}>
      <h2>Sign in to Shaftnet</h2>
      <p>This server is shared by a team and asks for a key: the team token or your personal key. Ask whoever runs it.
        A personal key signs your saves and reviews with your name.</p>
      <input type="text" name="username" autocomplete="username" value="team" hidden />
      <input type="password" name="token" autocomplete="current-password" aria-label="Team token or personal key" placeholder="Team token or personal key" required />
      ${this.error ? html`<p class="err">${this.error}</p>` : nothing}
      <button type="submit" ?disabled=${this.busy}>Sign in</button>
    </form>`;
  }

  private async onSubmit(e: Event): Promise<void> {
    e.preventDefault();
    const input = (e.target as HTMLFormElement).elements.namedItem('token') as HTMLInputElement;
    this.busy = true;
    this.error = '';
    try {
      await api.signIn(input.value);
      input.value = '';
      this.dispatchEvent(new CustomEvent('sn-signed-in', { bubbles: true, composed: true }));
    } catch (err) {
      this.error = err instanceof Error ? err.message : String(err);
    } finally {
      this.busy = false;
    }
  }
}

customElements.define('sn-signin', SnSignin);

declare global {
  interface HTMLElementTagNameMap {
    'sn-signin': SnSignin;
  }
}
