"""analysis"""
