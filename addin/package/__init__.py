"""The calculation-package template and reading input workbooks made from it."""
