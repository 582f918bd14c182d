"""The desktop window: PySide6 views over the Qt-free core. Nothing here decides about dates."""
