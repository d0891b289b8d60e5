"""speccheck.diagnostics"""
