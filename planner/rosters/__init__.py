"""rosters"""
