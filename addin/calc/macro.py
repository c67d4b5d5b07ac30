"""The ``fill_results`` macro shipped in the Calc extension: fill the open template's results into a new document.

The extension carries one Python macro file (`MACRO_FILE`, written by
`macro_source` into `MACRO_FOLDER`), which LibreOffice's Python script
provider lists under Tools > Macros > Run Macro > My Macros >
``groundstep.oxt`` > ``groundstep_fill`` (Application Macros for an
extension installed for all users). Its ``fill_results`` adds the
recorded site folders (as the add-in loader does) and calls `fill_results`
here with the macro's ``XSCRIPTCONTEXT``: the open document's named input
cells are read, the report computed, and the result sheets written into a
**new** Calc document (the template has ``Record`` and ``Peaks`` sheets of
its own, see ``live.fill_document``), which is recalculated and shown. A bad
input cell leaves no half-filled document: the message (naming the cell) is
shown in a message box and returned.

The macro's script URI, for a button or a toolbar entry (`script_uri`)::

    vnd.sun.star.script:groundstep.oxt|python|groundstep_fill.py$fill_results?language=Python&location=user:uno_packages

(``location=share:uno_packages`` for an extension installed for all users;
``groundstep.oxt`` is the file name the extension was installed from).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from groundstep.addin.package.names import lookup_names

__all__ = ["MACRO_FILE", "MACRO_FOLDER", "MACRO_NAME", "fill_results", "macro_source", "script_uri"]

#: Folder of the extension that holds Python macros (its manifest entry is a framework-script).
MACRO_FOLDER = "python"
#: The macro file inside `MACRO_FOLDER`.
MACRO_FILE = "groundstep_fill.py"
#: The macro's function name (what ``Run Macro`` lists).
MACRO_NAME = "fill_results"
#: First words of what `fill_results` returns when it refuses; the rest is the reason.
REFUSAL = "groundstep fill_results: "


def script_uri(package: str = "groundstep.oxt", location: str = "user:uno_packages") -> str:
    """The scripting framework's URI of the macro in the extension installed from `package`."""
    return (f"vnd.sun.star.script:{package}|{MACRO_FOLDER}|{MACRO_FILE}${MACRO_NAME}"
            f"?language=Python&location={location}")  # fmt: skip


def fill_results(context: Any) -> str:
    """Fill the result sheets of `context`'s document into a new Calc document; return what was done.

    Parameters
    ----------
    context : com.sun.star.script.provider.XScriptContext
        The macro's ``XSCRIPTCONTEXT`` (its document and desktop).

    Returns
    -------
    str
        ``"filled N result sheets into a new document"``, or `REFUSAL`
        followed by the reason (also shown in a message box when the
        document has a window).
    """
    from .live import fill_document

    document = _template_document(context)
    if document is None:
        return _refuse(
            context.getDocument(),
            "run it from a Calc document made from the Calc template (no open spreadsheet names its time-step cell)",
        )
    result = context.getDesktop().loadComponentFromURL("private:factory/scalc", "_blank", 0, ())
    try:
        report = fill_document(document, target=result, command="fill_results macro (Calc)")
    except ValueError as exc:  # bad or missing input cells (InputError, CellError), limits (LimitError)
        result.close(True)
        return _refuse(document, str(exc))
    sheets = result.Sheets
    first = sheets.getByIndex(0)  # the new document's own empty sheet
    if first.Name not in {sheet.name for sheet in report.layout.sheets}:
        sheets.removeByName(first.Name)
    result.calculateAll()
    return f"filled {len(report.layout.sheets)} result sheets into a new document"


def macro_source(site_folders: Sequence[str]) -> str:
    """The macro file the extension ships: site folders first, then `fill_results` with ``XSCRIPTCONTEXT``."""
    return f'''"""groundstep's fill_results macro for LibreOffice Calc, written by `groundstep calc-extension build`; do not edit."""
import site
import sys

SITE_FOLDERS = {list(site_folders)!r}


def _add_site_folders():
    before = list(sys.path)
    for folder in SITE_FOLDERS:
        site.addsitedir(folder)
    sys.path[:] = [p for p in sys.path if p not in before] + before


def {MACRO_NAME}(*args):
    """Fill the result sheets of this document (a filled-in Calc template) into a new document."""
    _add_site_folders()
    from groundstep.addin.calc.macro import fill_results as run

    return run(XSCRIPTCONTEXT)  # noqa: F821 - the script provider puts it into this module


g_exportedScripts = ({MACRO_NAME},)
'''


def _template_document(context: Any) -> Any:
    """The document the macro fills from: the current one, or else the one open spreadsheet made from the template.

    The scripting framework gives a macro the desktop's current component;
    with no window (headless LibreOffice, a macro started over UNO) there
    is none, so the open documents are searched for the template's
    time-step name. Two such documents and no current one: None (the macro
    cannot tell which one was meant).
    """
    current = context.getDocument()
    if _is_template(current):
        return current
    found = []
    components = context.getDesktop().getComponents().createEnumeration()
    while components.hasMoreElements():
        component = components.nextElement()
        if _is_template(component):
            found.append(component)
    return found[0] if len(found) == 1 else None


def _is_template(document: Any) -> bool:
    """True for a spreadsheet that defines the template's time-step cell (or its alias)."""
    names = getattr(document, "NamedRanges", None)
    return names is not None and any(names.hasByName(name) for name in lookup_names("dt"))


def _refuse(document: Any, reason: str) -> str:
    message = REFUSAL + reason
    _message_box(document, message)
    return message


def _message_box(document: Any, message: str) -> None:
    """Show `message` in an error box over `document`'s window; nothing without a window (headless)."""
    try:
        window = document.getCurrentController().getFrame().getContainerWindow()
    except AttributeError:  # no document, no controller or no frame: nowhere to show it
        return
    if window is None or not window.isVisible():
        return
    from com.sun.star.awt.MessageBoxType import ERRORBOX

    box = window.getToolkit().createMessageBox(window, ERRORBOX, 1, "groundstep", message)  # 1: an OK button
    box.execute()
