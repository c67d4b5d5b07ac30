"""The Calc add-in component: a class made from the one function table, inside LibreOffice's Python.

The extension's loader (``extension.loader_source``) imports this module
inside LibreOffice and calls `implementation` with ``unohelper.Base`` and
the UNO interfaces, so nothing here imports ``uno`` and the class can be
built and called in tests without LibreOffice. Each method of the
generated interface ``XStepFunctions`` hands Calc's values to
``edge.call``; the ``com.sun.star.sheet.XAddIn`` methods answer from
``registry.FUNCTIONS`` (Calc reads names and help texts from the
extension's ``CalcAddIns.xcu``, built from the same table).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from groundstep.addin.worksheet.registry import FUNCTIONS

from .edge import IMPLEMENTATION_NAME, call, sheet_name, uno_name

__all__ = ["CATEGORY", "SERVICE_NAMES", "implementation"]

#: Calc files add-in functions under one of its own categories; "Add-In" is the one for extensions.
CATEGORY = "Add-In"
#: Services the component offers: its own name and the one Calc enumerates add-ins by.
SERVICE_NAMES = (IMPLEMENTATION_NAME, "com.sun.star.sheet.AddIn")


def implementation(base: type, interfaces: tuple[type, ...]) -> type:
    """The component class: `base` (``unohelper.Base``) and `interfaces`, one method per STEP_ function."""
    namespace: dict[str, Any] = {uno_name(name): _method(name) for name in FUNCTIONS}
    namespace.update(
        __init__=_init,
        __doc__="groundstep's STEP_ worksheet functions for LibreOffice Calc.",
        getServiceName=lambda self: IMPLEMENTATION_NAME,
        getImplementationName=lambda self: IMPLEMENTATION_NAME,
        supportsService=lambda self, name: name in SERVICE_NAMES,
        getSupportedServiceNames=lambda self: SERVICE_NAMES,
        setLocale=_set_locale,
        getLocale=lambda self: self.locale,
        getProgrammaticFuntionName=lambda self, display: uno_name(display) if display in FUNCTIONS else "",
        getDisplayFunctionName=lambda self, method: _function(method, lambda f: f.name),
        getFunctionDescription=lambda self, method: _function(method, lambda f: f.summary),
        getDisplayArgumentName=lambda self, method, index: _argument(method, index, "name"),
        getArgumentDescription=lambda self, method, index: _argument(method, index, "help"),
        getProgrammaticCategoryName=lambda self, method: CATEGORY,
        getDisplayCategoryName=lambda self, method: CATEGORY,
    )
    return type("StepFunctions", (base, *interfaces), namespace)


def _init(self: Any, context: Any = None) -> None:
    self.context = context
    self.locale = None


def _set_locale(self: Any, locale: Any) -> None:
    self.locale = locale


def _method(name: str) -> Callable[..., Any]:
    def method(self: Any, *values: Any) -> Any:
        return call(name, values)

    method.__name__ = uno_name(name)
    method.__doc__ = FUNCTIONS[name].summary
    return method


def _function(method: str, pick: Callable[[Any], str]) -> str:
    try:
        return pick(FUNCTIONS[sheet_name(method)])
    except (KeyError, ValueError):
        return ""


def _argument(method: str, index: int, field: str) -> str:
    try:
        return str(getattr(FUNCTIONS[sheet_name(method)].arguments[index], field))
    except (KeyError, ValueError, IndexError):
        return ""
