"""world"""
