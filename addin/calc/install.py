"""Install the Calc extension for a user or into a profile folder, with LibreOffice's Python checked first.

LibreOffice runs its own Python: on Debian and Ubuntu the system
``/usr/bin/python3`` with ``python3-uno``; on Windows ``python.exe`` in
LibreOffice's ``program`` folder; on macOS ``LibreOffice.app/Contents/Resources/python``.
It does not see another interpreter's pip packages, so the extension
records site folders that hold groundstep and its dependencies:

* by default the running interpreter's (``site.getsitepackages()``), which
  works when its Python version (major.minor) equals LibreOffice's, since
  compiled wheels (numpy, numba) are built per version;
* otherwise a virtual environment made from LibreOffice's Python
  (``python3 -m venv --system-site-packages DIR``, then ``DIR/bin/pip
  install groundstep``), given as ``--python-env DIR``.

`install` checks that LibreOffice's Python imports ``uno`` and, with those
folders, groundstep's Calc component, before installing anything.
``unopkg`` installs for non-root users; as root (``unopkg`` refuses without
``--shared``) or with a profile folder, a private headless LibreOffice on
that profile installs it through its extension manager (``office.Office``).
"""

from __future__ import annotations

import os
import shutil
import site
import subprocess
import sys
import tempfile
from pathlib import Path

from .extension import EXTENSION_ID, build_extension, office_program_folder
from .office import Office, OfficeError

__all__ = ["InstallError", "default_profile", "install", "office_python", "remove", "site_folders"]

_CHECK = (
    "import site, sys\n"
    "for folder in sys.argv[1:]: site.addsitedir(folder)\n"
    "import uno\n"
    "import groundstep.addin.calc.component\n"
    "print(sys.version_info[0], sys.version_info[1])\n"
)


class InstallError(RuntimeError):
    """The extension cannot be installed as asked; the message says how to fix it."""


def office_python() -> Path:
    """LibreOffice's Python: the one that imports ``uno``, or InstallError saying what to install."""
    program = office_program_folder()
    candidates = []
    if program is not None:
        candidates += [program / "python.exe", program / "python", program.parent / "Resources" / "python"]
    candidates += [Path("/usr/bin/python3")]
    for candidate in candidates:
        if candidate.is_file() and _run([str(candidate), "-c", "import uno"]).returncode == 0:
            return candidate
    raise InstallError(
        "no Python that imports `uno` (LibreOffice's Python bridge) was found; on Debian/Ubuntu install it with "
        "`apt-get install python3-uno`; on Windows and macOS LibreOffice brings its own Python: reinstall "
        f"LibreOffice (looked at: {', '.join(map(str, candidates))})"
    )


def site_folders(python: Path, python_env: str | os.PathLike[str] | None = None) -> list[str]:
    """Site folders LibreOffice's `python` should add to import groundstep (see the module notes).

    Raises
    ------
    InstallError
        The Python versions differ and no `python_env` is given, or
        groundstep cannot be imported with the folders (message with the fix).
    """
    office_version = _version(python)
    if python_env is not None:
        env_python = next((p for p in (Path(python_env) / "bin" / "python", Path(python_env) / "Scripts" / "python.exe")
                           if p.is_file()), None)  # fmt: skip
        if env_python is None:
            raise InstallError(f"`--python-env` {python_env} is not a virtual environment (no bin/python)")
        folders = _run([str(env_python), "-c", "import site; print('\\n'.join(site.getsitepackages()))"]).stdout.split()
    elif office_version == sys.version_info[:2]:
        folders = site.getsitepackages()
    else:
        raise InstallError(
            f"LibreOffice's Python is {'.'.join(map(str, office_version))} ({python}) but groundstep runs on "
            f"Python {sys.version.split()[0]} here, and compiled packages differ between versions. Make an "
            f"environment from LibreOffice's Python and install groundstep into it: `{python} -m venv "
            "--system-site-packages ~/.groundstep-calc && ~/.groundstep-calc/bin/python -m pip install groundstep`, "
            "then run `groundstep calc-extension install --python-env ~/.groundstep-calc`"
        )
    done = _run([str(python), "-c", _CHECK, *folders])
    if done.returncode != 0:
        last = (done.stderr.strip().splitlines() or ["no message"])[-1]
        raise InstallError(
            f"LibreOffice's Python ({python}) cannot import groundstep from {', '.join(folders)}: {last}. Install "
            "groundstep for that Python (see `--python-env`) and run this command again"
        )
    return folders


def default_profile() -> Path:
    """The current user's LibreOffice profile folder (the one ``soffice`` uses without -env)."""
    if sys.platform == "win32":
        return Path(os.environ.get("APPDATA", Path.home())) / "LibreOffice" / "4"
    if sys.platform == "darwin":
        return Path.home() / "Library" / "Application Support" / "LibreOffice" / "4"
    return Path(os.environ.get("XDG_CONFIG_HOME", Path.home() / ".config")) / "libreoffice" / "4"


def install(profile: str | os.PathLike[str] | None = None, python_env: str | os.PathLike[str] | None = None) -> str:
    """Check LibreOffice's Python, build the extension for it and install it; return what was done.

    LibreOffice refuses the whole extension when it cannot enable the
    ``fill_results`` macro (no Python script provider); then the extension
    is built again without the macro, and the message says so and how to
    add the provider. Since that is the only difference, a second failure
    is reported as the first one.
    """
    python = office_python()
    folders = site_folders(python, python_env)
    note = ""
    with tempfile.TemporaryDirectory(prefix="groundstep-calc-") as work:
        oxt = build_extension(Path(work) / "groundstep.oxt", folders)
        try:
            where = _deploy(oxt, profile)
        except (InstallError, OfficeError) as first:
            (Path(work) / "bare").mkdir()
            bare = build_extension(Path(work) / "bare" / "groundstep.oxt", folders, macro=False)
            try:
                where = _deploy(bare, profile)
            except (InstallError, OfficeError):
                raise first from None
            note = (
                "; without the fill_results macro: LibreOffice could not enable it (its Python script provider is "
                "missing; Debian/Ubuntu: apt-get install libreoffice-script-provider-python, then install again)"
            )
    return (f"installed {EXTENSION_ID} {where}; LibreOffice's Python {python} imports groundstep from "
            f"{', '.join(folders)}{note}")  # fmt: skip


def remove(profile: str | os.PathLike[str] | None = None) -> str:
    """Remove the extension from the user's (or `profile`'s) LibreOffice; return what was done."""
    if profile is None and not _is_root() and shutil.which("unopkg"):
        done = _run(["unopkg", "remove", EXTENSION_ID])
        return f"removed {EXTENSION_ID}" if done.returncode == 0 else f"{EXTENSION_ID} was not installed"
    target = Path(profile) if profile is not None else default_profile()
    with Office(target) as office:
        removed = office.remove_extension(EXTENSION_ID)
    return f"removed {EXTENSION_ID} from {target}" if removed else f"{EXTENSION_ID} was not installed in {target}"


def _deploy(oxt: Path, profile: str | os.PathLike[str] | None) -> str:
    if profile is None and not _is_root() and shutil.which("unopkg"):
        done = _run(["unopkg", "add", "--force", str(oxt)])
        if done.returncode != 0:
            raise InstallError(f"unopkg add failed: {(done.stdout + done.stderr).strip()}")
        return "for the current user (unopkg); restart LibreOffice to use it"
    target = Path(profile) if profile is not None else default_profile()
    with Office(target) as office:
        office.add_extension(oxt)
    return f"into the profile {target}"


def _is_root() -> bool:
    return hasattr(os, "geteuid") and os.geteuid() == 0


def _version(python: Path) -> tuple[int, int]:
    done = _run([str(python), "-c", "import sys; print(*sys.version_info[:2])"])
    major, minor = done.stdout.split()
    return int(major), int(minor)


def _run(command: list[str]) -> subprocess.CompletedProcess[str]:
    return subprocess.run(command, capture_output=True, text=True, timeout=300)
