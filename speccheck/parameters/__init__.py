"""speccheck.parameters"""
