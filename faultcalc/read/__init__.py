"""From an input file to a System: load, cells, columns, rules, cases, doubts."""
