package limits

func (b *Book) validate(data []byte, name string) error { return nil }

func lineOf(data []byte, key string) int { return 0 }
