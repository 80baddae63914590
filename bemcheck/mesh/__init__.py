"""mesh"""
