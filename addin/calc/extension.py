"""The Calc extension (``.oxt``), generated from the one function table.

`build_extension` writes a zip with

* ``groundstep.rdb``: the UNO interface ``org.groundstep.calc.XStepFunctions``
  (one method per ``STEP_`` function, every argument ``any``; spilling
  functions return ``sequence<sequence<any>>``), compiled by LibreOffice's
  ``unoidl-write`` (Debian package ``libreoffice-dev``; the LibreOffice SDK
  elsewhere) from the IDL text `idl_text` makes, against LibreOffice's
  ``types.rdb``;
* ``groundstep_calc.py``: the loader LibreOffice's Python runs; it adds the
  recorded site folders (where groundstep and its dependencies are
  installed for that Python) to ``sys.path`` and builds the component of
  ``component.py``;
* ``CalcAddIns.xcu``: display names (``STEP_PEAK``), descriptions and
  argument help of every function, for Calc's function wizard;
* ``python/groundstep_fill.py``: the ``fill_results`` macro
  (``macro.macro_source``), listed by LibreOffice's Python script provider;
* ``description.xml`` and ``META-INF/manifest.xml``.

UNO names may not contain ``_``: ``edge.uno_name`` maps ``STEP_PEAK`` to
``stepPeak`` and back.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
import zipfile
from collections.abc import Sequence
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

from groundstep.addin.common import write_atomically
from groundstep.addin.worksheet.registry import FUNCTIONS
from groundstep.core import __version__

from .component import CATEGORY
from .edge import IMPLEMENTATION_NAME, MODULE_NAME, uno_name
from .macro import MACRO_FILE, MACRO_FOLDER, macro_source

__all__ = [
    "EXTENSION_ID",
    "LOADER_NAME",
    "addins_xcu",
    "build_extension",
    "description_xml",
    "find_unoidl_write",
    "idl_text",
    "loader_source",
    "manifest_xml",
    "office_program_folder",
]

#: Identifier of the extension in LibreOffice's extension manager.
EXTENSION_ID = "org.groundstep.calc"
#: File name of the loader inside the extension.
LOADER_NAME = "groundstep_calc.py"
_RDB_NAME = "groundstep.rdb"
_LANG = "en-US"


def idl_text() -> str:
    """The UNO IDL of the interface: one method per STEP_ function, arguments ``any``."""
    lines = []
    for function in FUNCTIONS.values():
        result = "sequence< sequence< any > >" if function.spills else "any"
        arguments = ", ".join(f"[in] any {uno_name(a.name)}" for a in function.arguments)
        lines.append(f"        {result} {uno_name(function.name)}({arguments});")
    opening = " ".join(f"module {part} {{" for part in MODULE_NAME.split("."))
    closing = " ".join("};" for _ in MODULE_NAME.split("."))
    return (
        "#include <com/sun/star/uno/XInterface.idl>\n"
        f"{opening}\n    interface XStepFunctions : com::sun::star::uno::XInterface {{\n"
        + "\n".join(lines)
        + f"\n    }};\n{closing}\n"
    )


def addins_xcu() -> str:
    """``CalcAddIns.xcu``: display names, descriptions and argument help for Calc's function wizard."""
    nodes = []
    for function in FUNCTIONS.values():
        parameters = "".join(
            f'<node oor:name="{uno_name(a.name)}" oor:op="replace">'
            f"{_prop('DisplayName', a.name)}{_prop('Description', a.help)}</node>"
            for a in function.arguments
        )
        nodes.append(
            f'<node oor:name="{uno_name(function.name)}" oor:op="replace">'
            f"{_prop('DisplayName', function.name)}{_prop('Description', function.summary)}"
            f'<prop oor:name="Category"><value>{CATEGORY}</value></prop>'
            f"{_prop('CompatibilityName', function.name)}"
            f'<node oor:name="Parameters">{parameters}</node></node>'
        )
    return (
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        '<oor:component-data xmlns:oor="http://openoffice.org/2001/registry" '
        'xmlns:xs="http://www.w3.org/2001/XMLSchema" oor:name="CalcAddIns" oor:package="org.openoffice.Office">\n'
        f'<node oor:name="AddInInfo"><node oor:name="{IMPLEMENTATION_NAME}" oor:op="replace">'
        f'<node oor:name="AddInFunctions">\n' + "\n".join(nodes) + "\n</node></node></node>\n</oor:component-data>\n"
    )


def manifest_xml(macro: bool = True) -> str:
    """``META-INF/manifest.xml``: the type library, the Python component, the configuration and (`macro`) the macros."""
    entries = [
        ("application/vnd.sun.star.uno-typelibrary;type=RDB", _RDB_NAME),
        ("application/vnd.sun.star.uno-component;type=Python", LOADER_NAME),
        ("application/vnd.sun.star.configuration-data", "CalcAddIns.xcu"),
    ]
    if macro:  # the folder of the Python macros; enabling it needs LibreOffice's Python script provider
        entries.append(("application/vnd.sun.star.framework-script", f"{MACRO_FOLDER}/"))
    files = "".join(
        f'<manifest:file-entry manifest:media-type="{kind}" manifest:full-path="{path}"/>\n' for kind, path in entries
    )
    return (
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        '<manifest:manifest xmlns:manifest="http://openoffice.org/2001/manifest">\n' + files + "</manifest:manifest>\n"
    )


def description_xml() -> str:
    """``description.xml``: identifier, version and display name of the extension."""
    return (
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        '<description xmlns="http://openoffice.org/extensions/description/2006" '
        'xmlns:d="http://openoffice.org/extensions/description/2006" xmlns:xlink="http://www.w3.org/1999/xlink">\n'
        f'<identifier value="{EXTENSION_ID}"/>\n<version value="{escape(__version__)}"/>\n'
        f'<display-name><name lang="{_LANG}">groundstep STEP_ worksheet functions</name></display-name>\n'
        "</description>\n"
    )


def loader_source(site_folders: Sequence[str]) -> str:
    """The Python file LibreOffice loads: site folders first, then the component (or a clear error)."""
    methods = {uno_name(f.name): f.spills for f in FUNCTIONS.values()}
    return f'''"""groundstep's Calc add-in loader, written by `groundstep calc-extension build`; do not edit."""
import site
import sys

SITE_FOLDERS = {list(site_folders)!r}
METHODS = {methods!r}
IMPLEMENTATION_NAME = {IMPLEMENTATION_NAME!r}


def _add_site_folders():
    before = list(sys.path)
    for folder in SITE_FOLDERS:
        site.addsitedir(folder)
    sys.path[:] = [p for p in sys.path if p not in before] + before


_add_site_folders()
import unohelper  # noqa: E402
from com.sun.star.lang import XLocalizable, XServiceInfo, XServiceName  # noqa: E402
from com.sun.star.sheet import XAddIn  # noqa: E402
from {MODULE_NAME} import XStepFunctions  # noqa: E402

_INTERFACES = (XStepFunctions, XAddIn, XServiceName, XServiceInfo, XLocalizable)
try:
    from groundstep.addin.calc.component import SERVICE_NAMES, implementation

    StepFunctions = implementation(unohelper.Base, _INTERFACES)
except Exception as exc:  # every cell says why, instead of #NAME?
    SERVICE_NAMES = (IMPLEMENTATION_NAME, "com.sun.star.sheet.AddIn")
    _MESSAGE = (
        "STEP error: LibreOffice's Python " + sys.version.split()[0] + " (" + sys.executable + ") cannot load "
        "groundstep: " + type(exc).__name__ + ": " + str(exc) + "; run `groundstep calc-extension install`"
    )

    def _failing(spills):
        return lambda self, *values: ((_MESSAGE,),) if spills else _MESSAGE

    StepFunctions = type("StepFunctions", (unohelper.Base,) + _INTERFACES, dict(
        {{name: _failing(spills) for name, spills in METHODS.items()}},
        __init__=lambda self, context=None: None,
        getServiceName=lambda self: IMPLEMENTATION_NAME,
        getImplementationName=lambda self: IMPLEMENTATION_NAME,
        supportsService=lambda self, name: name in SERVICE_NAMES,
        getSupportedServiceNames=lambda self: SERVICE_NAMES,
    ))

g_ImplementationHelper = unohelper.ImplementationHelper()
g_ImplementationHelper.addImplementation(StepFunctions, IMPLEMENTATION_NAME, SERVICE_NAMES)
'''


def office_program_folder() -> Path | None:
    """LibreOffice's ``program`` folder (holds ``soffice`` and ``types.rdb``), or None when not found."""
    candidates = [os.environ.get("GROUNDSTEP_OFFICE_PROGRAM", "")]
    found = shutil.which("soffice") or shutil.which("libreoffice")
    if found:
        candidates.append(str(Path(found).resolve().parent))
    candidates += [
        "/usr/lib/libreoffice/program",
        "/opt/libreoffice/program",
        r"C:\Program Files\LibreOffice\program",
        "/Applications/LibreOffice.app/Contents/MacOS",
    ]
    for candidate in candidates:
        if candidate and (Path(candidate) / "types.rdb").is_file():
            return Path(candidate)
    return None


def find_unoidl_write(program: Path | None = None) -> Path:
    """LibreOffice's ``unoidl-write`` (SDK), or FileNotFoundError saying how to install it."""
    program = program or office_program_folder()
    candidates = [shutil.which("unoidl-write")]
    if program is not None:
        for sdk in (program.parent / "sdk" / "bin", program.parent.parent / "sdk" / "bin", program):
            candidates += [str(sdk / "unoidl-write"), str(sdk / "unoidl-write.exe")]
    for candidate in candidates:
        if candidate and Path(candidate).is_file():
            return Path(candidate)
    raise FileNotFoundError(
        "`unoidl-write` of the LibreOffice SDK was not found; install it (Debian/Ubuntu: "
        "apt-get install libreoffice-dev; Windows/macOS: the LibreOffice SDK of the same version) "
        "or put it on PATH"
    )


def build_extension(
    out: str | os.PathLike[str], site_folders: Sequence[str] = (), *, force: bool = False, macro: bool = True
) -> Path:
    """Write the extension `out` (``.oxt``); `site_folders` are added to LibreOffice's ``sys.path``.

    Parameters
    ----------
    out : path-like
        The ``.oxt`` file to write (atomically).
    site_folders : sequence of str
        Folders holding groundstep and its dependencies for LibreOffice's
        Python (e.g. a virtual environment's ``site-packages``), recorded in
        the loader.
    force : bool, default False
        Replace `out` if it exists.
    macro : bool, default True
        Ship the ``fill_results`` macro (``macro.py``). LibreOffice refuses
        to install an extension with a Python macro when its Python script
        provider is missing (Debian: ``libreoffice-script-provider-python``).

    Raises
    ------
    FileNotFoundError
        LibreOffice's ``types.rdb`` or ``unoidl-write`` is missing.
    RuntimeError
        ``unoidl-write`` failed (its message is included).
    """
    program = office_program_folder()
    if program is None:
        raise FileNotFoundError("LibreOffice was not found (no soffice on PATH and no types.rdb); install LibreOffice")
    tool = find_unoidl_write(program)
    libraries = [p for p in (program / "types.rdb", program / "types" / "offapi.rdb") if p.is_file()]
    with tempfile.TemporaryDirectory(prefix="groundstep-oxt-") as work:
        source, rdb = Path(work) / "groundstep.idl", Path(work) / _RDB_NAME
        source.write_text(idl_text(), encoding="utf-8")
        done = subprocess.run([str(tool), *map(str, libraries), str(source), str(rdb)], capture_output=True, text=True)
        if done.returncode != 0 or not rdb.is_file():
            raise RuntimeError(f"unoidl-write failed ({done.returncode}): {done.stdout}{done.stderr}".strip())
        parts = {
            "META-INF/manifest.xml": manifest_xml(macro),
            "description.xml": description_xml(),
            "CalcAddIns.xcu": addins_xcu(),
            LOADER_NAME: loader_source(site_folders),
        }
        if macro:
            parts[f"{MACRO_FOLDER}/{MACRO_FILE}"] = macro_source(site_folders)

        def write(path: Path) -> None:
            with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
                for name, text in parts.items():
                    archive.writestr(name, text)
                archive.write(rdb, _RDB_NAME)

        return write_atomically(out, write, force=force)


def _prop(name: str, text: str) -> str:
    return f'<prop oor:name="{name}"><value xml:lang={quoteattr(_LANG)}>{escape(text)}</value></prop>'
