"""Reading the input workbook and writing results; no calculation lives here."""
