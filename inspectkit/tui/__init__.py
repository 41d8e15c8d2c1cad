"""Textual screens, dialogs and widgets; nothing here holds a business rule."""
