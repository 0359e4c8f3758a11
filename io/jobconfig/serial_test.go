package jobconfig

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A profile's serial_number names it for the instruments of a LandXML
// file; two profiles with one serial number are an error naming both.
func TestSerialNumbers(t *testing.T) {
	text := strings.Replace(full, "[instrument.old]\n", "[instrument.old]\nserial_number = \" S-77 \"\n", 1)
	f, err := Parse([]byte(text), "job.toml")
	require.NoError(t, err)
	j, err := Resolve(f, "job.toml")
	require.NoError(t, err)
	assert.Equal(t, map[string]string{"S-77": "old"}, j.Serials)

	text = strings.Replace(text, "[instrument.ts1]\n", "[instrument.ts1]\nserial_number = \"S-77\"\n", 1)
	f, err = Parse([]byte(text), "job.toml")
	require.NoError(t, err)
	_, err = Resolve(f, "job.toml")
	require.Error(t, err)
	assert.Contains(t, err.Error(), `instrument.ts1.serial_number: "S-77" is [instrument.old]'s serial_number too: one instrument, one profile`)
}
