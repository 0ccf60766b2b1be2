package recipe

import "reflect"

func reflectValue(p any) reflect.Value { return reflect.ValueOf(p).Elem() }
