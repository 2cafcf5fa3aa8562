"""Parts as bought: the catalog with datasheet figures, IEC 60063 values, the IEC 60062 colour code."""
