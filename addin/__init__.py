"""groundstep.addin: spreadsheets and the command line, adapted to groundstep.core.

Subpackages by role (imports run one way, down this list, and into
``groundstep.core``'s public modules only):

- ``cli``: the ``groundstep`` command, one module per command;
- ``package``: the calculation-package template and reading input workbooks;
- ``result``: the result workbook (layout, content, renderer, openpyxl and
  xlwings writers, verify);
- ``worksheet``: the ``STEP_`` worksheet functions (function table, cell
  parsing, caches);
- ``common``: the caution text, the error prefix, atomic writing.

``functions`` (the module xlwings loads) and ``live`` (the ``fill_results``
macro) keep the names users' workbooks refer to.
"""
