"""speccheck.filters"""
