"""Techniques: each turns one recorded file into a measurement of E½ with its own screen."""
