"""A private headless LibreOffice over UNO: start it, install or remove the extension, open documents.

`Office` starts ``soffice --headless`` on a profile folder of its own
(``-env:UserInstallation``) and a named pipe, connects over UNO and stops
the process it started when closed. The extension manager it drives
(``com.sun.star.deployment.ExtensionManager``) works for root as well,
where ``unopkg`` refuses to run without ``--shared``.

``uno`` is LibreOffice's Python bridge (Debian: ``python3-uno``);
`import_uno` finds it from another interpreter of the same Python version
too (the tests and benchmarks run this way).
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
import uuid
from pathlib import Path
from types import ModuleType
from typing import Any

__all__ = ["Office", "OfficeError", "import_uno", "property_values"]

#: Where Debian's python3-uno puts ``uno.py``; LibreOffice's own program folder holds ``pyuno``.
_UNO_FOLDERS = ("/usr/lib/python3/dist-packages", "/usr/lib/libreoffice/program")
_CONNECT_SECONDS = 120.0


class OfficeError(RuntimeError):
    """LibreOffice could not be started, reached or asked to do something."""


def import_uno() -> ModuleType:
    """The ``uno`` module: importable as is, or from Debian's python3-uno folders (appended to sys.path)."""
    try:
        import uno
    except ImportError:
        sys.path.extend(folder for folder in _UNO_FOLDERS if folder not in sys.path)
        try:
            import uno
        except ImportError:
            raise OfficeError(
                f"Python {sys.version.split()[0]} ({sys.executable}) cannot import `uno`, LibreOffice's Python "
                "bridge; install it (Debian/Ubuntu: apt-get install python3-uno) or run with LibreOffice's own Python"
            ) from None
    return uno


def property_values(**values: Any) -> tuple[Any, ...]:
    """UNO ``PropertyValue`` structs from keyword arguments (``FilterName="calc8"``)."""
    uno = import_uno()
    made = []
    for name, value in values.items():
        item = uno.createUnoStruct("com.sun.star.beans.PropertyValue")
        item.Name, item.Value = name, value
        made.append(item)
    return tuple(made)


class Office:
    """A headless LibreOffice on `profile`, reached over UNO; a context manager that stops it.

    Parameters
    ----------
    profile : path-like
        LibreOffice user profile folder (created on first start).
    soffice : str, default "soffice"
        The LibreOffice program to start.
    """

    def __init__(self, profile: str | os.PathLike[str], soffice: str = "soffice") -> None:
        uno = import_uno()
        self.profile = Path(profile).resolve()
        pipe = f"groundstep-{uuid.uuid4().hex[:12]}"
        self.process = subprocess.Popen(
            [soffice, f"-env:UserInstallation={self.profile.as_uri()}", "--headless", "--invisible", "--nologo",
             "--norestore", "--nodefault", f"--accept=pipe,name={pipe};urp;"],
            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True,
        )  # fmt: skip
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext("com.sun.star.bridge.UnoUrlResolver", local)
        deadline = time.monotonic() + _CONNECT_SECONDS
        while True:
            try:
                self.context = resolver.resolve(f"uno:pipe,name={pipe};urp;StarOffice.ComponentContext")
                break
            except Exception as exc:  # noqa: BLE001 - NoConnectException until soffice listens
                if time.monotonic() > deadline or self.process.poll() not in (None, 81):
                    self._kill()
                    raise OfficeError(f"LibreOffice ({soffice}) did not answer on its pipe: {exc}") from None
                time.sleep(0.25)
        self.desktop = self.context.ServiceManager.createInstanceWithContext("com.sun.star.frame.Desktop", self.context)

    def __enter__(self) -> Office:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        """Stop the LibreOffice this object started (documents are closed unsaved)."""
        try:
            self.desktop.terminate()
        except Exception:  # noqa: BLE001, S110 - the bridge drops when soffice exits
            pass
        try:
            self.process.wait(timeout=30)
        except subprocess.TimeoutExpired:
            self._kill()

    def _kill(self) -> None:
        try:
            os.killpg(self.process.pid, signal.SIGKILL)  # the group of the process started above
        except (ProcessLookupError, PermissionError):
            pass
        self.process.wait(timeout=30)

    # ------------------------------------------------------------------ extensions

    def _manager(self) -> Any:
        return self.context.getValueByName("/singletons/com.sun.star.deployment.ExtensionManager")

    def add_extension(self, path: str | os.PathLike[str]) -> None:
        """Install the ``.oxt`` at `path` for this profile's user (replacing an installed one)."""
        uno = import_uno()
        manager = self._manager()
        try:
            manager.addExtension(uno.systemPathToFileUrl(str(Path(path).resolve())), (), "user",
                                 manager.createAbortChannel(), _environment())  # fmt: skip
        except Exception as exc:  # noqa: BLE001 - a DeploymentException from the office
            raise OfficeError(f"LibreOffice could not install {path}: {exc}") from None

    def remove_extension(self, identifier: str) -> bool:
        """Remove the extension `identifier` from this profile; False when it was not installed."""
        if identifier not in self.extensions():
            return False
        manager = self._manager()
        manager.removeExtension(identifier, "", "user", manager.createAbortChannel(), _environment())
        return True

    def extensions(self) -> list[str]:
        """Identifiers of the extensions installed in this profile."""
        manager = self._manager()
        deployed = manager.getDeployedExtensions("user", manager.createAbortChannel(), _environment())
        return [item.getIdentifier().Value for item in deployed]

    # ------------------------------------------------------------------ documents

    def new_spreadsheet(self) -> Any:
        """A new, empty Calc document."""
        return self.desktop.loadComponentFromURL("private:factory/scalc", "_blank", 0, property_values(Hidden=True))

    def open(self, path: str | os.PathLike[str]) -> Any:
        """Open the document at `path` (hidden)."""
        uno = import_uno()
        url = uno.systemPathToFileUrl(str(Path(path).resolve()))
        return self.desktop.loadComponentFromURL(url, "_blank", 0, property_values(Hidden=True))

    @staticmethod
    def save(document: Any, path: str | os.PathLike[str], filter_name: str) -> None:
        """Store a copy of `document` at `path` with a LibreOffice filter ("calc8", "Calc Office Open XML")."""
        uno = import_uno()
        document.storeToURL(uno.systemPathToFileUrl(str(Path(path).resolve())), property_values(FilterName=filter_name))


def _environment() -> Any:
    """A command environment that approves the extension manager's questions (no dialogs headless)."""
    uno = import_uno()
    import unohelper
    from com.sun.star.task import XInteractionHandler
    from com.sun.star.ucb import XCommandEnvironment, XProgressHandler

    approve = uno.getTypeByName("com.sun.star.task.XInteractionApprove")

    class Handler(unohelper.Base, XInteractionHandler):
        def handle(self, request: Any) -> None:
            for continuation in request.getContinuations():
                if continuation.queryInterface(approve) is not None:
                    continuation.select()
                    return

    class Progress(unohelper.Base, XProgressHandler):
        def push(self, status: Any) -> None: ...
        def update(self, status: Any) -> None: ...
        def pop(self) -> None: ...

    class Environment(unohelper.Base, XCommandEnvironment):
        def getInteractionHandler(self) -> Any:
            return Handler()

        def getProgressHandler(self) -> Any:
            return Progress()

    return Environment()
