"""speccheck.records"""
