import { useEffect } from 'react';
import { useMap } from 'react-leaflet';

/**
 * Names the map around this component for assistive technology: a region described as a map
 * (WAI-ARIA 1.2 `aria-roledescription`) and labelled with what it shows.
 */
export function useMapName(label: string) {
  const map = useMap();
  useEffect(() => {
    const container = map.getContainer();
    container.setAttribute('role', 'region');
    container.setAttribute('aria-roledescription', 'map');
    container.setAttribute('aria-label', label);
  }, [map, label]);
}
