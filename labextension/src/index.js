// Readable names for orbitledger's record exporters in the "Save and Export Notebook As" menu.
//
// JupyterLab 4 and Notebook 7 name each export item after the nbconvert entry point, first
// letter capitalised ("Orbitrecord", "Orbitrecord_pdf"): the server's /api/nbconvert sends only
// the names and MIME types, and the entry-point name has to stay a URL word (`\w+`) because the
// export URL carries it. This plugin gives the two items the names the exporters give
// themselves for front ends (`export_from_notebook` in orbitledger/reporting/exporter.py; the
// test tests/test_exporter_labels.py checks that the two lists agree). Every other item is
// left alone, and the export itself (format, command, URL) does not change.
import { IMainMenu } from '@jupyterlab/mainmenu';
import { MessageLoop } from '@lumino/messaging';

export const LABELS = {
  orbitrecord: 'Orbit calculation record',
  orbitrecord_pdf: 'Orbit calculation record (PDF)'
};

const EXPORT_COMMAND = 'notebook:export-to-format';
const EXPORT_SUBMENU_ID = 'jp-mainmenu-file-notebookexport';

function wanted(item) {
  const args = item.args || {};
  const format = args.format;
  if (item.command !== EXPORT_COMMAND || args.isPalette) {
    return null;
  }
  if (!Object.prototype.hasOwnProperty.call(LABELS, format)) {
    return null;
  }
  return args.label === LABELS[format] ? null : LABELS[format];
}

// Replace each of our items by the same command with the readable label, at the same place.
export function relabel(menu) {
  for (let index = 0; index < menu.items.length; index++) {
    const item = menu.items[index];
    const label = wanted(item);
    if (label !== null) {
      menu.removeItemAt(index);
      menu.insertItem(index, {
        command: EXPORT_COMMAND,
        args: { ...item.args, label }
      });
    }
  }
}

function exportSubmenu(fileMenu) {
  const entry = fileMenu.items.find(
    item => item.type === 'submenu' && item.submenu && item.submenu.id === EXPORT_SUBMENU_ID
  );
  return entry ? entry.submenu : null;
}

// Relabel just before a menu shows (its items are filled in when the first notebook opens).
function beforeShowing(menu, action) {
  MessageLoop.installMessageHook(menu, (handler, msg) => {
    if (msg.type === 'before-attach') {
      action();
    }
    return true;
  });
}

const plugin = {
  id: '@orbitledger/export-labels:plugin',
  description: "Readable names for orbitledger's calculation-record exporters.",
  autoStart: true,
  requires: [IMainMenu],
  activate: (app, mainMenu) => {
    const hooked = new Set();
    const update = () => {
      const submenu = exportSubmenu(mainMenu.fileMenu);
      if (submenu === null) {
        return;
      }
      relabel(submenu);
      if (!hooked.has(submenu)) {
        hooked.add(submenu);
        beforeShowing(submenu, () => relabel(submenu));
      }
    };
    beforeShowing(mainMenu.fileMenu, update);
  }
};

export default plugin;
