"""speccheck.report"""
