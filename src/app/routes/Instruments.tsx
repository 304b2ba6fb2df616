/** Route module: Instruments (facility managers): every microscope with its channel pair and approved calibration; record a new one. */
import { useState } from 'react';
import { useNavigate } from 'react-router';
import { Button, Loading, PageHeader } from '@/components';
import { useMe } from '@/features/auth';
import { InstrumentList, RecordInstrumentDialog } from '@/features/instruments';
import { Component as NotFound } from './NotFound';

export function Component() {
  const me = useMe();
  const nav = useNavigate();
  const [open, setOpen] = useState(false);
  if (!me.data) return <Loading />;
  if (!me.data.roles.includes('facility_manager')) return <NotFound />;
  return (
    <div>
      <PageHeader
        title="Instruments"
        description="Each instrument carries a calibration: how far its second channel is shifted against the first, and how much each channel bleeds into the other. Runs whose recipe asks for it apply the approved version."
        actions={
          <Button variant="primary" onClick={() => setOpen(true)}>
            Record an instrument
          </Button>
        }
      />
      <InstrumentList />
      <RecordInstrumentDialog open={open} onClose={() => setOpen(false)} onDone={(i) => nav(`/instruments/${i.id}`)} />
    </div>
  );
}
