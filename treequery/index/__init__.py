"""The SQLite index: schema, builder, tree reconstruction and statistics."""
