/**
 * The shared-document side of an expression editor: y-codemirror.next's
 * binding of the editor to one Y.Text (remote edits, remote cursors, and the
 * document's one undo history), plus the names of the people whose cursor is
 * in this field, drawn as tooltips so the editor's own scrolling never clips them.
 */
import { StateField, type EditorState, type Extension } from "@codemirror/state";
import { EditorView, showTooltip, type Tooltip } from "@codemirror/view";
import { keymap } from "@codemirror/view";
import { yCollab, ySyncFacet, yUndoManagerKeymap } from "y-codemirror.next";
import * as Y from "yjs";

/** What binds an editor to the shared document. */
export interface SharedField {
  text: Y.Text;
  /** Presence of everyone on the page (null until connected: no remote cursors yet). */
  awareness: unknown;
  /** The document's one undo history, shared by every editor of the page. */
  undoManager: Y.UndoManager;
}

interface RemoteHead {
  pos: number;
  name: string;
  colour: string;
}

interface AwarenessState {
  user?: { name?: unknown; colour?: unknown; color?: unknown };
  cursor?: { head?: unknown } | null;
}

function remoteHeads(state: EditorState): RemoteHead[] {
  const conf = state.facet(ySyncFacet) as { ytext: Y.Text; awareness: { clientID: number; getStates(): Map<number, AwarenessState> } | null } | undefined;
  if (!conf?.awareness || !conf.ytext.doc) return [];
  const heads: RemoteHead[] = [];
  conf.awareness.getStates().forEach((remote, clientId) => {
    if (clientId === conf.awareness!.clientID || !remote.cursor?.head) return;
    const head = Y.createAbsolutePositionFromRelativePosition(Y.createRelativePositionFromJSON(remote.cursor.head), conf.ytext.doc!);
    if (!head || head.type !== conf.ytext) return;
    const user = remote.user ?? {};
    heads.push({ pos: Math.min(head.index, state.doc.length), name: String(user.name ?? "Someone"), colour: String(user.colour ?? user.color ?? "#5c6169") });
  });
  return heads;
}

function nameTooltip(head: RemoteHead): Tooltip {
  return {
    pos: head.pos,
    above: true,
    arrow: false,
    create: () => {
      const dom = document.createElement("div");
      dom.className = "hn-remote-name";
      dom.textContent = head.name;
      dom.style.backgroundColor = head.colour;
      return { dom, offset: { x: -2, y: 1 } };
    },
  };
}

const remoteNames = StateField.define<{ key: string; tooltips: readonly Tooltip[] }>({
  create: (state) => {
    const heads = remoteHeads(state);
    return { key: JSON.stringify(heads), tooltips: heads.map(nameTooltip) };
  },
  // y-codemirror.next dispatches a transaction on every presence change; keep the tooltips when nothing moved.
  update: (value, tr) => {
    const heads = remoteHeads(tr.state);
    const key = JSON.stringify(heads);
    return key === value.key ? value : { key, tooltips: heads.map(nameTooltip) };
  },
  provide: (field) => showTooltip.computeN([field], (state) => state.field(field).tooltips),
});

const remoteNameTheme = EditorView.theme({
  ".cm-tooltip.hn-remote-name": {
    border: "none",
    borderRadius: "3px",
    padding: "0 4px",
    fontSize: "11px",
    lineHeight: "15px",
    color: "#fff",
    pointerEvents: "none",
    whiteSpace: "nowrap",
  },
  ".cm-ySelectionInfo": { display: "none" },
});

/** The extensions that bind an editor to its Y.Text; they replace CodeMirror's own history. */
export function sharedFieldExtensions(field: SharedField): Extension[] {
  return [keymap.of(yUndoManagerKeymap), yCollab(field.text, field.awareness, { undoManager: field.undoManager }), remoteNames, remoteNameTheme];
}
