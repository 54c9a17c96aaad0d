/**
 * The application's keys on the whole window: Ctrl+Z undo, Ctrl+Shift+Z and
 * Ctrl+Y redo (what is being typed is committed first, so undo steps back over
 * it like any other edit), Escape closes the open panel.
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';

/** What the keys act on. */
export interface ShortcutActions {
  undo(): void;
  redo(): void;
  /** True while a panel (library, save, conflict) is open. */
  panelOpen(): boolean;
  closePanel(): void;
}

/** The focused element, through shadow roots. */
export function deepActive(): Element | null {
  let a: Element | null = document.activeElement;
  while (a?.shadowRoot?.activeElement) a = a.shadowRoot.activeElement;
  return a;
}

export class ShortcutsController implements ReactiveController {
  private readonly host: ReactiveControllerHost & { updateComplete: Promise<boolean> };
  private readonly actions: ShortcutActions;

  constructor(host: ReactiveControllerHost & { updateComplete: Promise<boolean> }, actions: ShortcutActions) {
    this.host = host;
    this.actions = actions;
    host.addController(this);
  }

  hostConnected(): void {
    window.addEventListener('keydown', this.onKeyDown);
  }

  hostDisconnected(): void {
    window.removeEventListener('keydown', this.onKeyDown);
  }

  private onKeyDown = (e: KeyboardEvent): void => {
    if (e.key === 'Escape' && this.actions.panelOpen()) {
      e.preventDefault();
      this.actions.closePanel();
      return;
    }
    if (!(e.ctrlKey || e.metaKey) || e.altKey || this.actions.panelOpen()) return;
    const key = e.key.toLowerCase();
    const isUndo = key === 'z' && !e.shiftKey;
    const isRedo = (key === 'z' && e.shiftKey) || key === 'y';
    if (!isUndo && !isRedo) return;
    e.preventDefault();
    const active = deepActive();
    const typing = active instanceof HTMLInputElement || active instanceof HTMLTextAreaElement;
    if (typing) active.blur(); // fires "change": the typed text becomes an edit first
    if (isUndo) this.actions.undo();
    else this.actions.redo();
    if (typing) void this.host.updateComplete.then(() => active.isConnected && active.focus());
  };
}
