"""trips"""
