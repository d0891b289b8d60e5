"""speccheck.lot"""
