"""speccheck.spec"""
