"""speccheck.readers"""
