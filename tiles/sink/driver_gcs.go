//go:build stipple_cloud || stipple_gcs

package sink

import _ "gocloud.dev/blob/gcsblob" // registers its bucket URL scheme
