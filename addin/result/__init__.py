"""The result workbook: layout classes, the concrete layout, content, renderer, writers, verify."""
