"""groundstep in LibreOffice Calc: the add-in extension, its argument edge and the live writer."""
