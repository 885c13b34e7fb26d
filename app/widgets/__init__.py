"""Stakeline's own widgets: buttons and fields sized for gloves, the keypad and the section view."""
