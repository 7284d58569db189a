package render

func (c *Canvas) ZZMarked() (marked int) {
	for _, m := range c.mask {
		for ; m != 0; m &= m - 1 {
			marked++
		}
	}
	return
}
