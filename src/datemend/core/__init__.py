"""The Qt-free core: reading, scanning, parsing, fix logs, derived columns, export."""
