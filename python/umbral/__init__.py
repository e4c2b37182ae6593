from . import _umbral
