"""What every stage shares: errors, units, YAML files, output files, escaping, JSON, paths."""
