"""From a StudyResult to files: workbook, JSON, CSV, staged writes; format, never compute."""
