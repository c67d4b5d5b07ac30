"""groundstep.addin: spreadsheets and the command line, adapted to groundstep.core."""
