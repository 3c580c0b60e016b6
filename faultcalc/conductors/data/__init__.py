"""Reference data tables, each a CSV file whose header comment names its source."""
