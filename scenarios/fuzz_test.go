package scenarios

import (
	"errors"
	"strings"
	"testing"
)

// FuzzLoadBytes feeds arbitrary bytes to the loader, which must never
// panic: it returns a scenario or ValidationErrors. A scenario it accepts
// must survive the canonical round trip with its hash unchanged. The seed
// corpus (the examples and the malformed cases) runs in every go test;
// `go test -fuzz FuzzLoadBytes ./scenarios` explores further.
func FuzzLoadBytes(f *testing.F) {
	for _, name := range Examples() {
		text, err := ExampleText(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(text)
	}
	for _, tc := range malformedCases {
		f.Add([]byte(tc.text))
	}
	f.Add([]byte(minimal))
	f.Add([]byte("a = " + strings.Repeat("{b=", 70) + "1" + strings.Repeat("}", 70)))
	f.Add([]byte("extends = \"burst.toml\"\n[history.burst]\nkind = \"none\"\n"))
	f.Add([]byte("extends = \"fuzz.toml\"\n"))
	f.Add([]byte("extends = \"../base.toml\"\n"))
	f.Add([]byte(minimal + "[[survey.field.cones]]\nl_deg = 1.0\n"))
	f.Add([]byte("[history.s]\nkind = \"constant\"\n[survey.field]\nkind = \"cones\"\n[[survey.field.cones]]\nl_deg = 1.0\nb_deg = 2.0\nradius_deg = 3.0\ndistance_max_pc = 4.0\n"))
	f.Add([]byte(minimal + withData + burstPart + "[compare]\nburst_part = \"b\"\n[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.1\nmax = 2.0\nprior = \"log-uniform\"\n"))
	f.Add([]byte(minimal + "[compare]\nfree = []\n[data]\nfile = \"../x.csv\"\n"))
	f.Add([]byte("extends = \"fit.toml\"\n[data]\nsha256 = \"" + strings.Repeat("Ab", 32) + "\"\n"))
	f.Add([]byte("[history.b]\nkind = \"bins\"\nedges_gyr = [0.0, 1.0, 10.0]\nrates = [2.0, 1.0]\n[survey.field]\nkind = \"sphere\"\ndistance_max_pc = 9e300\n"))

	f.Fuzz(func(t *testing.T, data []byte) {
		r, err := LoadBytes("fuzz.toml", data, ExamplesFS())
		if err != nil {
			var verrs ValidationErrors
			if !errors.As(err, &verrs) {
				t.Fatalf("error is %T, want ValidationErrors: %v", err, err)
			}
			if err.Error() == "" {
				t.Fatal("empty error message")
			}
			return
		}
		canon := r.Canonical()
		back, err := LoadBytes("canonical.toml", canon, nil)
		if err != nil {
			t.Fatalf("canonical form does not load: %v\n%s", err, canon)
		}
		if back.Hash() != r.Hash() {
			t.Fatalf("hash changed over the round trip:\n%s\n---\n%s", canon, back.Canonical())
		}
	})
}
